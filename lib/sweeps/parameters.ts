/**
 * The parameters a sweep axis can vary, with their units and the ranges the
 * spec accepts. This one table drives the zod schema of the scenario (so a base
 * value and an axis value are checked by the same rule), the axis validation,
 * the cell expansion and the sweep builder form.
 *
 * Pure data and pure functions: safe to import in the browser.
 */
import type { ContactModelName, IntegratorName, Scenario, SceneKind } from "../physics/types";

/** Every scene kind, in the order the contract lists them. */
export const SCENE_KINDS: readonly SceneKind[] = ["pair", "wall", "row", "box", "snapshot", "slope", "stack"];

/**
 * Limits every spec must stay within. The limits on cells, steps and body-steps
 * are checked against the expanded cells (the smallest dt, the largest N of an
 * axis), not only against the base scenario.
 */
export const SPEC_LIMITS = {
  /** At most this many axes in one sweep. */
  maxAxes: 3,
  /** Product of the axis counts. */
  maxCellsPerSweep: 262_144,
  /** Integrator steps of one cell: durationS / (dtS / substeps). */
  maxStepsPerCell: 2_000_000,
  /** Discs in one scene (the row scene counts its striker). */
  maxBodies: 10_000,
  /** Static walls of one snapshot scene. */
  maxWalls: 64,
  /** Bodies × steps of one cell for the many-body scenes (row, box, snapshot): bounds the compute of one cell. */
  maxBodyStepsPerCell: 500_000_000,
  /** Substeps per frame step. */
  maxSubsteps: 1_000,
  /** Choices listed on one axis. */
  maxListValues: 64,
  /** Object pairs on one scene.pair axis: every unordered pair of 64 objects, 64 · 65 / 2. */
  maxPairs: 2_080,
  /** Characters of the optional sweep name. */
  maxNameLength: 120,
} as const;

export interface NumericParameter {
  kind: "number";
  /** Dotted path in the scenario, as written in an axis. */
  path: string;
  label: string;
  /** SI unit ("" for a pure number). */
  unit: string;
  /** Scene kinds the parameter applies to; "all" for the scenario-level ones. */
  scenes: readonly SceneKind[] | "all";
  min: number;
  minInclusive: boolean;
  max: number;
  maxInclusive: boolean;
  integer: boolean;
  /** The spacing the builder form offers first. */
  suggestedSpacing: "linear" | "log";
  /** Why this parameter exists, for the form's help text. */
  help: string;
}

export interface ChoiceParameter {
  kind: "choice";
  path: "integrator" | "contact.model";
  label: string;
  choices: readonly string[];
  scenes: "all";
  help: string;
}

export type SweepableParameter = NumericParameter | ChoiceParameter;

const positive = { min: 0, minInclusive: false } as const;
const nonNegative = { min: 0, minInclusive: true } as const;

function numeric(
  path: string,
  label: string,
  unit: string,
  scenes: readonly SceneKind[] | "all",
  bounds: { min: number; minInclusive: boolean; max: number; maxInclusive?: boolean; integer?: boolean },
  suggestedSpacing: "linear" | "log",
  help: string,
): NumericParameter {
  return {
    kind: "number",
    path,
    label,
    unit,
    scenes,
    min: bounds.min,
    minInclusive: bounds.minInclusive,
    max: bounds.max,
    maxInclusive: bounds.maxInclusive ?? true,
    integer: bounds.integer ?? false,
    suggestedSpacing,
    help,
  };
}

/*
 * Upper bounds are sanity limits, far beyond any game object, that keep every
 * product of two values finite in double precision (common practice).
 */
const MAX_MASS_KG = 1e6;
const MAX_LENGTH_M = 1e4;
const MAX_SPEED_M_PER_S = 1e5;
const MAX_STIFFNESS = 1e12;
const MAX_DAMPING_COEFFICIENT = 1e9;
const MAX_YOUNGS_MODULUS_PA = 1e13;
const MAX_GRAVITY_M_PER_S2 = 1e4;
const MAX_DURATION_S = 3_600;
const MAX_DT_S = 1;
/**
 * Largest friction coefficient (static or sliding) a spec accepts: rubber on dry rough surfaces
 * stays below about 2 (from memory); 10 leaves room for "never slides" studies without letting
 * a typo pass unnoticed (our choice).
 */
export const MAX_FRICTION_COEFFICIENT = 10;
/** Largest k_t/k_n: common practice keeps it within 2/7 … 1; 10 is far beyond any use (our choice). */
export const MAX_TANGENTIAL_STIFFNESS_RATIO = 10;
/** Largest tangential damping ratio (5× critical; our choice). */
export const MAX_TANGENTIAL_DAMPING_RATIO = 5;
/** Largest rolling resistance coefficient μ_r (a lever arm of one radius; measured values are below 0.1, Ai et al. 2011). */
export const MAX_ROLLING_RESISTANCE = 1;
/** Largest initial spin (rad/s; our choice). */
const MAX_SPIN_RAD_PER_S = 1e5;
/** Largest stack (the engine's MAX_STACK_DISCS). */
export const MAX_STACK_COUNT = 1_000;

export const NUMERIC_PARAMETERS: readonly NumericParameter[] = [
  numeric("dtS", "frame step dt", "s", "all", { ...positive, max: MAX_DT_S }, "log", "Frame step of the fixed-step integrator."),
  numeric(
    "substeps",
    "substeps per frame",
    "",
    "all",
    { min: 1, minInclusive: true, max: SPEC_LIMITS.maxSubsteps, integer: true },
    "linear",
    "The integrator advances dt / substeps at a time.",
  ),
  numeric("durationS", "duration", "s", "all", { ...positive, max: MAX_DURATION_S }, "linear", "Simulated time of each cell."),
  numeric(
    "contact.stiffness",
    "contact stiffness k",
    "N/m (linear) or N/m^1.5 (hertz)",
    "all",
    { ...positive, max: MAX_STIFFNESS },
    "log",
    "Penalty spring constant; not with a Hertz material.",
  ),
  numeric(
    "contact.damping.coefficient",
    "damping coefficient",
    "N·s/m (linear) or N·s/m^1.25 (hertz)",
    "all",
    { ...nonNegative, max: MAX_DAMPING_COEFFICIENT },
    "log",
    "Dashpot coefficient; needs damping kind \"coefficient\" in the scenario.",
  ),
  numeric(
    "contact.damping.restitution",
    "target restitution e",
    "",
    "all",
    { ...positive, max: 1 },
    "linear",
    "Target coefficient of restitution; needs damping kind \"restitution\" in the scenario.",
  ),
  numeric(
    "contact.material.youngsModulusPa",
    "Young's modulus E",
    "Pa",
    "all",
    { ...positive, max: MAX_YOUNGS_MODULUS_PA },
    "log",
    "Hertz contact from a material; needs contact.material in the scenario.",
  ),
  numeric(
    "contact.material.poissonRatio",
    "Poisson ratio ν",
    "",
    "all",
    { min: -1, minInclusive: false, max: 0.5, maxInclusive: true },
    "linear",
    "Hertz contact from a material; needs contact.material in the scenario.",
  ),
  numeric(
    "contact.friction.coefficient",
    "friction coefficient μ",
    "",
    "all",
    { ...nonNegative, max: MAX_FRICTION_COEFFICIENT },
    "linear",
    "Sliding (Coulomb) friction coefficient; 0 for frictionless, non-rotating discs. Needs contact.friction in the scenario.",
  ),
  numeric(
    "contact.friction.staticCoefficient",
    "static friction coefficient μ_s",
    "",
    "all",
    { ...nonNegative, max: MAX_FRICTION_COEFFICIENT },
    "linear",
    "Coefficient a sticking contact must exceed to start sliding (at least μ). Needs contact.friction in the scenario.",
  ),
  numeric(
    "contact.friction.stiffnessRatio",
    "tangential stiffness ratio k_t/k",
    "",
    "all",
    { ...positive, max: MAX_TANGENTIAL_STIFFNESS_RATIO },
    "linear",
    "Tangential spring as a multiple of the normal stiffness (common practice: 2/7 to 1). Needs contact.friction in the scenario.",
  ),
  numeric(
    "contact.friction.stiffness",
    "tangential stiffness k_t",
    "N/m",
    "all",
    { ...positive, max: MAX_STIFFNESS },
    "log",
    "Tangential spring given directly (overrides the ratio). Needs contact.friction in the scenario.",
  ),
  numeric(
    "contact.friction.dampingRatio",
    "tangential damping ratio ζ_t",
    "",
    "all",
    { ...nonNegative, max: MAX_TANGENTIAL_DAMPING_RATIO },
    "linear",
    "Tangential dashpot as a fraction of critical damping. Needs contact.friction in the scenario.",
  ),
  numeric(
    "contact.rollingResistance",
    "rolling resistance μ_r",
    "",
    "all",
    { ...nonNegative, max: MAX_ROLLING_RESISTANCE },
    "linear",
    "Resisting torque μ_r·R·F_n against rolling (Ai, Chen, Rotter & Ooi 2011); 0 for none.",
  ),
  // pair
  numeric("scene.massAKg", "mass of A", "kg", ["pair"], { ...positive, max: MAX_MASS_KG }, "log", "Mass of the moving disc A."),
  numeric("scene.massBKg", "mass of B", "kg", ["pair"], { ...positive, max: MAX_MASS_KG }, "log", "Mass of disc B."),
  numeric(
    "scene.massRatio",
    "mass ratio B/A",
    "",
    ["pair"],
    { ...positive, max: MAX_MASS_KG },
    "log",
    "Sets massBKg = massAKg × ratio in every cell.",
  ),
  numeric("scene.radiusAM", "radius of A", "m", ["pair"], { ...positive, max: MAX_LENGTH_M }, "log", "Radius of disc A."),
  numeric("scene.radiusBM", "radius of B", "m", ["pair"], { ...positive, max: MAX_LENGTH_M }, "log", "Radius of disc B."),
  numeric("scene.speedAMPerS", "speed of A", "m/s", ["pair"], { ...nonNegative, max: MAX_SPEED_M_PER_S }, "log", "Speed of A towards B."),
  numeric("scene.speedBMPerS", "speed of B", "m/s", ["pair"], { ...nonNegative, max: MAX_SPEED_M_PER_S }, "linear", "Speed of B towards A."),
  numeric(
    "scene.offsetFraction",
    "impact offset",
    "",
    ["pair"],
    { min: 0, minInclusive: true, max: 1, maxInclusive: false },
    "linear",
    "Impact parameter / sum of radii: 0 head-on, towards 1 glancing.",
  ),
  numeric(
    "scene.closingSpeedFraction",
    "fraction of closing speed",
    "",
    ["pair"],
    { ...positive, max: 100 },
    "linear",
    "Multiplies both speeds of each cell (after scene.pair and the speed axes): 1 is the pair's closing speed.",
  ),
  numeric("scene.gapM", "initial gap", "m", ["pair", "wall", "row"], { ...nonNegative, max: MAX_LENGTH_M }, "linear", "Surface gap before the first contact."),
  numeric("scene.spinARadPerS", "initial spin of A", "rad/s", ["pair"], { min: -MAX_SPIN_RAD_PER_S, minInclusive: true, max: MAX_SPIN_RAD_PER_S }, "linear", "Angular velocity of A, counter-clockwise positive (turns only with friction)."),
  numeric("scene.spinBRadPerS", "initial spin of B", "rad/s", ["pair"], { min: -MAX_SPIN_RAD_PER_S, minInclusive: true, max: MAX_SPIN_RAD_PER_S }, "linear", "Angular velocity of B, counter-clockwise positive (turns only with friction)."),
  numeric(
    "scene.spinRadPerS",
    "initial spin",
    "rad/s",
    ["wall", "slope"],
    { min: -MAX_SPIN_RAD_PER_S, minInclusive: true, max: MAX_SPIN_RAD_PER_S },
    "linear",
    "Angular velocity of the disc, counter-clockwise positive (turns only with friction).",
  ),
  // wall, row, box, slope, stack
  numeric("scene.massKg", "disc mass", "kg", ["wall", "row", "box", "slope", "stack"], { ...positive, max: MAX_MASS_KG }, "log", "Mass of each disc."),
  numeric("scene.radiusM", "disc radius", "m", ["wall", "row", "box", "slope", "stack"], { ...positive, max: MAX_LENGTH_M }, "log", "Radius of each disc."),
  numeric("scene.speedMPerS", "speed down the slope", "m/s", ["slope"], { ...nonNegative, max: MAX_SPEED_M_PER_S }, "linear", "Initial speed of the body down the incline; 0 releases it at rest."),
  numeric(
    "scene.angleDeg",
    "slope angle",
    "°",
    ["slope"],
    { min: 0, minInclusive: true, max: 90, maxInclusive: false },
    "linear",
    "Angle of the incline from the horizontal.",
  ),
  numeric(
    "scene.count",
    "stacked discs N",
    "",
    ["stack"],
    { min: 1, minInclusive: true, max: MAX_STACK_COUNT, integer: true },
    "log",
    "Discs in the tower.",
  ),
  numeric(
    "scene.perturbationFraction",
    "sideways perturbation",
    "",
    ["stack"],
    { min: 0, minInclusive: true, max: 0.5, maxInclusive: true },
    "linear",
    "Largest seeded sideways shift of each disc, as a fraction of its radius.",
  ),
  numeric("scene.speedMPerS", "disc speed", "m/s", ["wall"], { ...positive, max: MAX_SPEED_M_PER_S }, "log", "Speed of the disc towards the wall."),
  numeric(
    "scene.angleDeg",
    "angle of incidence",
    "°",
    ["wall"],
    { min: 0, minInclusive: true, max: 90, maxInclusive: false },
    "linear",
    "Angle between the velocity and the wall normal: 0 head-on.",
  ),
  numeric(
    "scene.count",
    "resting discs N",
    "",
    ["row"],
    { min: 1, minInclusive: true, max: SPEC_LIMITS.maxBodies - 1, integer: true },
    "log",
    "Discs in the row (the striker comes on top).",
  ),
  numeric("scene.strikerMassKg", "striker mass", "kg", ["row"], { ...positive, max: MAX_MASS_KG }, "log", "Mass of the striking disc."),
  numeric(
    "scene.strikerSpeedMPerS",
    "striker speed",
    "m/s",
    ["row"],
    { ...positive, max: MAX_SPEED_M_PER_S },
    "log",
    "Speed of the striking disc.",
  ),
  numeric("scene.spacingM", "row spacing", "m", ["row"], { ...nonNegative, max: MAX_LENGTH_M }, "linear", "Surface gap between resting discs."),
  numeric(
    "scene.count",
    "discs N",
    "",
    ["box"],
    { min: 1, minInclusive: true, max: SPEC_LIMITS.maxBodies, integer: true },
    "log",
    "Discs in the box.",
  ),
  numeric("scene.widthM", "box width", "m", ["box"], { ...positive, max: MAX_LENGTH_M }, "linear", "Inner width of the box."),
  numeric("scene.heightM", "box height", "m", ["box"], { ...positive, max: MAX_LENGTH_M }, "linear", "Inner height of the box."),
  numeric(
    "scene.maxSpeedMPerS",
    "largest initial speed",
    "m/s",
    ["box"],
    { ...nonNegative, max: MAX_SPEED_M_PER_S },
    "log",
    "Initial speeds are uniform in [0, this].",
  ),
  numeric(
    "scene.gravityMPerS2",
    "gravity",
    "m/s²",
    ["box", "snapshot", "slope", "stack"],
    { ...nonNegative, max: MAX_GRAVITY_M_PER_S2 },
    "linear",
    "Gravity along −y; 0 for none.",
  ),
  // snapshot
  numeric(
    "scene.speedScale",
    "speed scale",
    "",
    ["snapshot"],
    { ...nonNegative, max: 100 },
    "linear",
    "Multiplies every initial velocity of the snapshot: 1 runs it as exported.",
  ),
];

/**
 * Per-body and per-wall fields of a snapshot scene: checked like the parameters above, but not
 * sweepable (an axis varies the whole scene through scene.speedScale and scene.gravityMPerS2).
 */
export const SNAPSHOT_FIELD_RULES: Readonly<Record<"xM" | "yM" | "vxMPerS" | "vyMPerS" | "massKg" | "radiusM" | "omegaRadPerS" | "normalX" | "normalY" | "offsetM", NumericParameter>> = {
  xM: numeric("xM", "x position", "m", ["snapshot"], { min: -MAX_LENGTH_M, minInclusive: true, max: MAX_LENGTH_M }, "linear", "Centre of the disc."),
  yM: numeric("yM", "y position", "m", ["snapshot"], { min: -MAX_LENGTH_M, minInclusive: true, max: MAX_LENGTH_M }, "linear", "Centre of the disc (y up)."),
  vxMPerS: numeric("vxMPerS", "x velocity", "m/s", ["snapshot"], { min: -MAX_SPEED_M_PER_S, minInclusive: true, max: MAX_SPEED_M_PER_S }, "linear", "Velocity of the disc."),
  vyMPerS: numeric("vyMPerS", "y velocity", "m/s", ["snapshot"], { min: -MAX_SPEED_M_PER_S, minInclusive: true, max: MAX_SPEED_M_PER_S }, "linear", "Velocity of the disc."),
  massKg: numeric("massKg", "mass", "kg", ["snapshot"], { ...positive, max: MAX_MASS_KG }, "log", "Mass of the disc."),
  radiusM: numeric("radiusM", "radius", "m", ["snapshot"], { ...positive, max: MAX_LENGTH_M }, "log", "Radius of the disc."),
  omegaRadPerS: numeric("omegaRadPerS", "angular velocity", "rad/s", ["snapshot"], { min: -MAX_SPIN_RAD_PER_S, minInclusive: true, max: MAX_SPIN_RAD_PER_S }, "linear", "Spin of the disc, counter-clockwise positive (turns only with friction)."),
  normalX: numeric("normalX", "wall normal x", "", ["snapshot"], { min: -1, minInclusive: true, max: 1 }, "linear", "Points into the free side."),
  normalY: numeric("normalY", "wall normal y", "", ["snapshot"], { min: -1, minInclusive: true, max: 1 }, "linear", "Points into the free side."),
  offsetM: numeric("offsetM", "wall offset", "m", ["snapshot"], { min: -MAX_LENGTH_M, minInclusive: true, max: MAX_LENGTH_M }, "linear", "normal · p = offset on the wall."),
};

export const CHOICE_PARAMETERS: readonly ChoiceParameter[] = [
  {
    kind: "choice",
    path: "integrator",
    label: "integrator",
    choices: ["symplectic-euler", "velocity-verlet", "explicit-euler"] satisfies IntegratorName[],
    scenes: "all",
    help: "Fixed-step integrator of each cell.",
  },
  {
    kind: "choice",
    path: "contact.model",
    label: "contact model",
    choices: ["linear", "hertz"] satisfies ContactModelName[],
    scenes: "all",
    help: "Normal force law; each choice must be complete in the scenario (linear needs contact.stiffness).",
  },
];

/** Everything an axis can sweep, numeric ones first (for the UI). */
export const SWEEPABLE_PARAMETERS: readonly SweepableParameter[] = [...NUMERIC_PARAMETERS, ...CHOICE_PARAMETERS];

/** The distinct parameter paths an axis may name. */
export const SWEEPABLE_PATHS: readonly string[] = [...new Set(SWEEPABLE_PARAMETERS.map((parameter) => parameter.path))];

function appliesTo(parameter: SweepableParameter, sceneKind: SceneKind): boolean {
  return parameter.scenes === "all" || parameter.scenes.includes(sceneKind);
}

/** The parameter behind `path` for a scene kind, or undefined when it does not apply to that scene. */
export function findParameter(path: string, sceneKind: SceneKind): SweepableParameter | undefined {
  return SWEEPABLE_PARAMETERS.find((parameter) => parameter.path === path && appliesTo(parameter, sceneKind));
}

/** The numeric rule for a field of a scene (or a scenario-level field when sceneKind is irrelevant). */
export function numericRule(path: string, sceneKind: SceneKind): NumericParameter {
  const parameter = findParameter(path, sceneKind);
  if (!parameter || parameter.kind !== "number") {
    throw new Error(`no numeric rule for ${path} in the ${sceneKind} scene`);
  }
  return parameter;
}

/** The parameters available for one scene kind, for the builder form. */
export function parametersForScene(sceneKind: SceneKind): SweepableParameter[] {
  return SWEEPABLE_PARAMETERS.filter((parameter) => appliesTo(parameter, sceneKind));
}

/** Scene kinds a path applies to (for error messages). */
export function scenesOfPath(path: string): SceneKind[] {
  const kinds = new Set<SceneKind>();
  for (const parameter of SWEEPABLE_PARAMETERS) {
    if (parameter.path !== path) continue;
    for (const kind of parameter.scenes === "all" ? SCENE_KINDS : parameter.scenes) kinds.add(kind);
  }
  return SCENE_KINDS.filter((kind) => kinds.has(kind));
}

/** A short human description of the accepted range, e.g. "> 0 and ≤ 1". */
export function describeRange(parameter: NumericParameter): string {
  const lower = `${parameter.minInclusive ? "≥" : ">"} ${formatLimit(parameter.min)}`;
  const upper = `${parameter.maxInclusive ? "≤" : "<"} ${formatLimit(parameter.max)}`;
  return `${parameter.integer ? "an integer " : ""}${lower} and ${upper}`;
}

/** Why `value` is outside the parameter's range, or null when it is inside. */
export function rangeViolation(parameter: NumericParameter, value: number): string | null {
  if (!Number.isFinite(value)) return `must be a finite number (got ${String(value)})`;
  const belowMin = parameter.minInclusive ? value < parameter.min : value <= parameter.min;
  const aboveMax = parameter.maxInclusive ? value > parameter.max : value >= parameter.max;
  const notInteger = parameter.integer && !Number.isInteger(value);
  if (belowMin || aboveMax || notInteger) {
    return `${parameter.label} must be ${describeRange(parameter)}${parameter.unit ? ` (${parameter.unit})` : ""}; got ${formatLimit(value)}`;
  }
  return null;
}

/** Numbers in messages: grouped thousands up to millions ("262,144"), exponents beyond ("5e8"), plain otherwise. */
export function formatLimit(value: number): string {
  const magnitude = Math.abs(value);
  if (Number.isInteger(value) && magnitude >= 1_000 && magnitude < 1e7) return value.toLocaleString("en-US");
  if (magnitude >= 1e7 && magnitude < 1e21) return value.toExponential().replace("e+", "e");
  return String(value);
}

/**
 * Pseudo parameters that only an axis sets (each writes other scene fields); a scenario has no
 * field of that name, so forms must not offer them as scenario fields.
 */
export const AXIS_ONLY_PATHS: ReadonlySet<string> = new Set(["scene.massRatio", "scene.closingSpeedFraction"]);

/** Read a numeric field of a scenario by its dotted path (the pseudo path scene.massRatio is derived). */
export function readNumericField(scenario: Scenario, path: string): number | undefined {
  if (path === "scene.massRatio") {
    return scenario.scene.kind === "pair" ? scenario.scene.massBKg / scenario.scene.massAKg : undefined;
  }
  let node: unknown = scenario;
  for (const key of path.split(".")) {
    if (node === null || typeof node !== "object") return undefined;
    node = (node as Record<string, unknown>)[key];
  }
  return typeof node === "number" ? node : undefined;
}
