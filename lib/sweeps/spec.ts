/**
 * The sweep spec: a scenario plus up to three axes. This zod schema is the one
 * source for the API, the builder form, the CLI and docs/sweep-spec.md.
 *
 * The scenario parses into exactly `Scenario` of lib/physics/types.ts. The
 * parsed spec has the same shape as its input (defaults filled in), so it can
 * be stored as JSON and parsed again.
 *
 * Pure: safe to import in the browser.
 */
import { z } from "@/lib/zod";
import { DEFAULT_TOLERANCES } from "../physics/constants";
import { boxSceneProblem, describeSnapshotOverlap, snapshotOverlaps } from "../physics/scenes";
import { VERDICT_RULES_VERSION, VERDICT_RULES_VERSIONS, type Scenario, type SceneKind, type Tolerances } from "../physics/types";
import {
  SPEC_LIMITS,
  findParameter,
  formatLimit,
  numericRule,
  rangeViolation,
  readNumericField,
  SNAPSHOT_FIELD_RULES,
  scenesOfPath,
  SWEEPABLE_PATHS,
  type NumericParameter,
} from "./parameters";

export { SPEC_LIMITS, SWEEPABLE_PARAMETERS, parametersForScene } from "./parameters";
export { axisValues, bodyCount, stepsPerCell } from "./axes";
import { PAIR_AXIS_PATH, applyAxisValues, axisValues, bodyCount, isIntegerParameter, type AxisFields } from "./axes";

/** Tolerances used when a spec leaves them out: the engine's own defaults. */
export const SPEC_DEFAULT_TOLERANCES: Readonly<Required<Omit<Tolerances, RestingTolerance>>> = Object.freeze({
  energyDriftRel: DEFAULT_TOLERANCES.energyDriftRel,
  maxOverlapFraction: DEFAULT_TOLERANCES.maxOverlapFraction,
  blowUpEnergyFactor: DEFAULT_TOLERANCES.blowUpEnergyFactor,
  amplificationLimit: DEFAULT_TOLERANCES.amplificationLimit,
  restitutionRel: DEFAULT_TOLERANCES.restitutionRel,
  energyPeakRel: DEFAULT_TOLERANCES.energyPeakRel,
  minStepsPerContact: DEFAULT_TOLERANCES.minStepsPerContact,
});
/**
 * Tolerances of the resting-contact verdicts (slope and stack scenes). Left out of the defaults a
 * spec is filled with, so specs without them keep the form (and hash) they always had; the engine
 * falls back to DEFAULT_TOLERANCES.
 */
type RestingTolerance = "restSpeedMPerS" | "creepFraction" | "restingOverlapFraction";
/** Seed used when a spec leaves it out. */
export const SPEC_DEFAULT_SEED = 1;
const MAX_SEED = 0xffff_ffff;

// ---------------------------------------------------------------------------
// Numbers

function describeReceived(input: unknown): string {
  if (input === undefined) return "missing";
  if (typeof input === "number") return String(input);
  if (input === null) return "null";
  if (Array.isArray(input)) return "an array";
  return `a ${typeof input}`;
}

/** A number field checked by the parameter table's rule for that field. */
function ruledNumber(rule: NumericParameter) {
  return z
    .number({ error: (issue) => `${rule.label} must be a finite number (${rule.unit || "no unit"}); got ${describeReceived(issue.input)}` })
    .superRefine((value, ctx) => {
      const problem = rangeViolation(rule, value);
      // Aborting: the whole-spec checks below (grid corners, axis values) never see an out-of-range number.
      if (problem) ctx.addIssue({ code: "custom", message: problem, input: value, continue: false });
    });
}

function boundedNumber(label: string, min: number, minInclusive: boolean, max: number) {
  return ruledNumber({
    kind: "number",
    path: label,
    label,
    unit: "",
    scenes: "all",
    min,
    minInclusive,
    max,
    maxInclusive: true,
    integer: false,
    suggestedSpacing: "linear",
    help: "",
  });
}

function sceneNumber(kind: SceneKind, field: string) {
  return ruledNumber(numericRule(`scene.${field}`, kind));
}

// ---------------------------------------------------------------------------
// Scenario

export const pairSceneSchema = z.strictObject({
  kind: z.literal("pair"),
  massAKg: sceneNumber("pair", "massAKg"),
  massBKg: sceneNumber("pair", "massBKg"),
  radiusAM: sceneNumber("pair", "radiusAM"),
  radiusBM: sceneNumber("pair", "radiusBM"),
  speedAMPerS: sceneNumber("pair", "speedAMPerS"),
  speedBMPerS: sceneNumber("pair", "speedBMPerS"),
  offsetFraction: sceneNumber("pair", "offsetFraction"),
  gapM: sceneNumber("pair", "gapM"),
  spinARadPerS: sceneNumber("pair", "spinARadPerS").optional(),
  spinBRadPerS: sceneNumber("pair", "spinBRadPerS").optional(),
});

export const wallSceneSchema = z.strictObject({
  kind: z.literal("wall"),
  massKg: sceneNumber("wall", "massKg"),
  radiusM: sceneNumber("wall", "radiusM"),
  speedMPerS: sceneNumber("wall", "speedMPerS"),
  angleDeg: sceneNumber("wall", "angleDeg"),
  gapM: sceneNumber("wall", "gapM"),
  spinRadPerS: sceneNumber("wall", "spinRadPerS").optional(),
});

export const rowSceneSchema = z.strictObject({
  kind: z.literal("row"),
  count: sceneNumber("row", "count"),
  massKg: sceneNumber("row", "massKg"),
  radiusM: sceneNumber("row", "radiusM"),
  strikerMassKg: sceneNumber("row", "strikerMassKg"),
  strikerSpeedMPerS: sceneNumber("row", "strikerSpeedMPerS"),
  spacingM: sceneNumber("row", "spacingM"),
  gapM: sceneNumber("row", "gapM"),
});

export const boxSceneSchema = z.strictObject({
  kind: z.literal("box"),
  count: sceneNumber("box", "count"),
  massKg: sceneNumber("box", "massKg"),
  radiusM: sceneNumber("box", "radiusM"),
  widthM: sceneNumber("box", "widthM"),
  heightM: sceneNumber("box", "heightM"),
  maxSpeedMPerS: sceneNumber("box", "maxSpeedMPerS"),
  gravityMPerS2: sceneNumber("box", "gravityMPerS2"),
});

export const slopeSceneSchema = z.strictObject({
  kind: z.literal("slope"),
  massKg: sceneNumber("slope", "massKg"),
  radiusM: sceneNumber("slope", "radiusM"),
  angleDeg: sceneNumber("slope", "angleDeg"),
  speedMPerS: sceneNumber("slope", "speedMPerS").default(0),
  spinRadPerS: sceneNumber("slope", "spinRadPerS").default(0),
  gravityMPerS2: sceneNumber("slope", "gravityMPerS2"),
  body: z.enum(["disc", "crate"], { error: "scene.body must be disc or crate" }).default("disc"),
});

export const stackSceneSchema = z.strictObject({
  kind: z.literal("stack"),
  count: sceneNumber("stack", "count"),
  massKg: sceneNumber("stack", "massKg"),
  radiusM: sceneNumber("stack", "radiusM"),
  gravityMPerS2: sceneNumber("stack", "gravityMPerS2"),
  perturbationFraction: sceneNumber("stack", "perturbationFraction").default(0.01),
});

const snapshotBodySchema = z.strictObject(
  {
    xM: ruledNumber(SNAPSHOT_FIELD_RULES.xM),
    yM: ruledNumber(SNAPSHOT_FIELD_RULES.yM),
    vxMPerS: ruledNumber(SNAPSHOT_FIELD_RULES.vxMPerS),
    vyMPerS: ruledNumber(SNAPSHOT_FIELD_RULES.vyMPerS),
    massKg: ruledNumber(SNAPSHOT_FIELD_RULES.massKg),
    radiusM: ruledNumber(SNAPSHOT_FIELD_RULES.radiusM),
    omegaRadPerS: ruledNumber(SNAPSHOT_FIELD_RULES.omegaRadPerS).optional(),
  },
  { error: (issue) => (issue.code === "invalid_type" ? `each body must be an object with xM, yM, vxMPerS, vyMPerS, massKg, radiusM; got ${describeReceived(issue.input)}` : undefined) },
);

const snapshotWallSchema = z
  .strictObject(
    {
      normalX: ruledNumber(SNAPSHOT_FIELD_RULES.normalX),
      normalY: ruledNumber(SNAPSHOT_FIELD_RULES.normalY),
      offsetM: ruledNumber(SNAPSHOT_FIELD_RULES.offsetM),
    },
    { error: (issue) => (issue.code === "invalid_type" ? `each wall must be an object with normalX, normalY, offsetM; got ${describeReceived(issue.input)}` : undefined) },
  )
  .superRefine((wall, ctx) => {
    if (Math.hypot(wall.normalX, wall.normalY) < 1e-6) ctx.addIssue({ code: "custom", path: ["normalX"], message: "the wall normal (normalX, normalY) must not be zero" });
  });

/** The bodies of a snapshot: 1 to SPEC_LIMITS.maxBodies discs, the count named when over. */
export const snapshotBodiesSchema = z
  .array(snapshotBodySchema, { error: (issue) => `bodies must be an array of discs; got ${describeReceived(issue.input)}` })
  .min(1, { error: "bodies must list at least one disc" })
  .max(SPEC_LIMITS.maxBodies, { abort: true,
    error: (issue) => `${Array.isArray(issue.input) ? `${formatLimit(issue.input.length)} bodies exceed` : "bodies exceed"} the limit of ${formatLimit(SPEC_LIMITS.maxBodies)} bodies per scene`,
  });

export const snapshotWallsSchema = z
  .array(snapshotWallSchema, { error: (issue) => `walls must be an array; got ${describeReceived(issue.input)}` })
  .max(SPEC_LIMITS.maxWalls, { abort: true, error: `a snapshot has at most ${SPEC_LIMITS.maxWalls} walls` });

/** At most this many initial overlaps are listed one by one (the rest are counted). */
const MAX_LISTED_OVERLAPS = 20;

/** Initial overlaps, each at the path of its (first) body, as zod issues. */
export function addSnapshotOverlapIssues(scene: { bodies: z.output<typeof snapshotBodiesSchema>; walls: z.output<typeof snapshotWallsSchema> }, ctx: z.RefinementCtx, prefix: (string | number)[] = []): void {
  const overlaps = snapshotOverlaps(scene, MAX_LISTED_OVERLAPS + 1);
  overlaps.slice(0, MAX_LISTED_OVERLAPS).forEach((overlap) => ctx.addIssue({ code: "custom", path: [...prefix, "bodies", overlap.a], message: describeSnapshotOverlap(overlap) }));
  if (overlaps.length > MAX_LISTED_OVERLAPS) ctx.addIssue({ code: "custom", path: [...prefix, "bodies"], message: `more initial overlaps beyond the ${MAX_LISTED_OVERLAPS} listed` });
}

export const snapshotSceneSchema = z
  .strictObject({
    kind: z.literal("snapshot"),
    bodies: snapshotBodiesSchema,
    walls: snapshotWallsSchema.default(() => []),
    gravityMPerS2: sceneNumber("snapshot", "gravityMPerS2").default(0),
    speedScale: sceneNumber("snapshot", "speedScale").default(1),
  })
  .superRefine((scene, ctx) => addSnapshotOverlapIssues(scene, ctx));

export const sceneSchema = z.discriminatedUnion("kind", [pairSceneSchema, wallSceneSchema, rowSceneSchema, boxSceneSchema, snapshotSceneSchema, slopeSceneSchema, stackSceneSchema], {
  error: (issue) =>
    issue.code === "invalid_union" ? `scene.kind must be one of pair, wall, row, box, snapshot, slope, stack; got ${JSON.stringify(issue.input && (issue.input as { kind?: unknown }).kind) ?? "nothing"}` : undefined,
});

/**
 * Scene fields a spec may leave out (an empty form field means "not set", not NaN), read from the
 * scene schemas themselves so that a new optional field needs no second list.
 */
export const OPTIONAL_SCENE_PATHS: ReadonlySet<string> = new Set(
  sceneSchema.options.flatMap((option) =>
    Object.entries(option.shape)
      .filter(([, field]) => field.safeParse(undefined).success)
      .map(([key]) => `scene.${key}`),
  ),
);

const dampingSchema = z.discriminatedUnion(
  "kind",
  [
    z.strictObject({ kind: z.literal("none") }),
    z.strictObject({ kind: z.literal("coefficient"), value: ruledNumber(numericRule("contact.damping.coefficient", "pair")) }),
    z.strictObject({ kind: z.literal("restitution"), value: ruledNumber(numericRule("contact.damping.restitution", "pair")) }),
  ],
  { error: (issue) => (issue.code === "invalid_union" ? "damping.kind must be one of none, coefficient, restitution" : undefined) },
);

export const contactSchema = z.strictObject({
  model: z.enum(["linear", "hertz"], { error: "contact.model must be linear or hertz" }),
  stiffness: ruledNumber(numericRule("contact.stiffness", "pair")).optional(),
  material: z
    .strictObject({
      youngsModulusPa: ruledNumber(numericRule("contact.material.youngsModulusPa", "pair")),
      poissonRatio: ruledNumber(numericRule("contact.material.poissonRatio", "pair")),
    })
    .optional(),
  wall: z.enum(["disc-material", "rigid"], { error: "contact.wall must be disc-material or rigid" }).optional(),
  damping: dampingSchema.default(() => ({ kind: "none" as const })),
  friction: z
    .strictObject({
      coefficient: ruledNumber(numericRule("contact.friction.coefficient", "pair")),
      staticCoefficient: ruledNumber(numericRule("contact.friction.staticCoefficient", "pair")).optional(),
      stiffnessRatio: ruledNumber(numericRule("contact.friction.stiffnessRatio", "pair")).optional(),
      stiffness: ruledNumber(numericRule("contact.friction.stiffness", "pair")).optional(),
      dampingRatio: ruledNumber(numericRule("contact.friction.dampingRatio", "pair")).optional(),
    })
    .optional(),
  rollingResistance: ruledNumber(numericRule("contact.rollingResistance", "pair")).optional(),
});

export const tolerancesSchema = z.strictObject({
  energyDriftRel: boundedNumber("tolerances.energyDriftRel", 0, false, 1e6),
  maxOverlapFraction: boundedNumber("tolerances.maxOverlapFraction", 0, false, 100),
  blowUpEnergyFactor: boundedNumber("tolerances.blowUpEnergyFactor", 1, false, 1e300),
  // Used by verdict rules 2 (lib/physics/simulate.ts judgeByRules2); defaults and their basis in lib/physics/constants.ts.
  amplificationLimit: boundedNumber("tolerances.amplificationLimit", 1, false, 1e6).default(SPEC_DEFAULT_TOLERANCES.amplificationLimit),
  restitutionRel: boundedNumber("tolerances.restitutionRel", 0, false, 1e6).default(SPEC_DEFAULT_TOLERANCES.restitutionRel),
  energyPeakRel: boundedNumber("tolerances.energyPeakRel", 0, false, 1e6).default(SPEC_DEFAULT_TOLERANCES.energyPeakRel),
  minStepsPerContact: boundedNumber("tolerances.minStepsPerContact", 0, true, 1e6).default(SPEC_DEFAULT_TOLERANCES.minStepsPerContact),
  // Resting-contact verdicts (slope and stack scenes); absent: DEFAULT_TOLERANCES.
  restSpeedMPerS: boundedNumber("tolerances.restSpeedMPerS", 0, false, 1e6).optional(),
  creepFraction: boundedNumber("tolerances.creepFraction", 0, false, 1e6).optional(),
  restingOverlapFraction: boundedNumber("tolerances.restingOverlapFraction", 0, false, 100).optional(),
});

export const scenarioSchema = z.strictObject({
  scene: sceneSchema,
  contact: contactSchema,
  integrator: z.enum(["symplectic-euler", "velocity-verlet", "explicit-euler"], {
    error: "integrator must be symplectic-euler, velocity-verlet or explicit-euler",
  }),
  dtS: ruledNumber(numericRule("dtS", "pair")),
  substeps: ruledNumber(numericRule("substeps", "pair")).default(1),
  durationS: ruledNumber(numericRule("durationS", "pair")),
  tolerances: tolerancesSchema.default(() => ({ ...SPEC_DEFAULT_TOLERANCES })),
  verdictRules: z
    .number({ error: (issue) => `verdictRules must be one of ${VERDICT_RULES_VERSIONS.join(", ")}; got ${describeReceived(issue.input)}` })
    .refine((value) => VERDICT_RULES_VERSIONS.includes(value), { error: `verdictRules must be one of ${VERDICT_RULES_VERSIONS.join(", ")}` })
    .default(VERDICT_RULES_VERSION),
  seed: z
    .number({ error: (issue) => `seed must be an integer from 0 to ${MAX_SEED}; got ${describeReceived(issue.input)}` })
    .int({ error: `seed must be an integer from 0 to ${MAX_SEED}`, abort: true })
    .min(0, { error: `seed must be an integer from 0 to ${MAX_SEED}`, abort: true })
    .max(MAX_SEED, { error: `seed must be an integer from 0 to ${MAX_SEED}`, abort: true })
    .default(SPEC_DEFAULT_SEED),
});

// ---------------------------------------------------------------------------
// Axes

/** One entry of a scene.pair axis: body A and body B of a pair scene, at their top speeds. */
export const axisPairSchema = z.strictObject({
  name: z.string({ error: "pair name must be a string" }).min(1, { error: "pair name must not be empty" }).max(SPEC_LIMITS.maxNameLength, { error: `pair name may have at most ${SPEC_LIMITS.maxNameLength} characters` }),
  massAKg: sceneNumber("pair", "massAKg"),
  radiusAM: sceneNumber("pair", "radiusAM"),
  speedAMPerS: sceneNumber("pair", "speedAMPerS"),
  massBKg: sceneNumber("pair", "massBKg"),
  radiusBM: sceneNumber("pair", "radiusBM"),
  speedBMPerS: sceneNumber("pair", "speedBMPerS"),
  /** The pair's own contact stiffness (per-group stiffness); absent: the scenario's. */
  stiffness: ruledNumber(numericRule("contact.stiffness", "pair")).optional(),
  /** The pair's own target restitution (needs damping kind "restitution"); absent: the scenario's. */
  restitution: ruledNumber(numericRule("contact.damping.restitution", "pair")).optional(),
  /** The pair's own Coulomb friction coefficient μ (its other friction settings: the scenario's contact.friction, else the engine's defaults); absent: the scenario's. */
  friction: ruledNumber(numericRule("contact.friction.coefficient", "pair")).optional(),
  /** The pair's own rolling resistance μ_r; absent: the scenario's. */
  rollingResistance: ruledNumber(numericRule("contact.rollingResistance", "pair")).optional(),
});

export type AxisPair = z.infer<typeof axisPairSchema>;

export const axisSchema = z.strictObject({
  /** A path from SWEEPABLE_PARAMETERS, e.g. "contact.stiffness". */
  parameter: z.string({ error: "parameter must be a string naming a sweepable parameter" }),
  spacing: z.enum(["linear", "log"], { error: "spacing must be linear or log" }).optional(),
  from: z.number({ error: (issue) => `from must be a finite number; got ${describeReceived(issue.input)}` }).optional(),
  to: z.number({ error: (issue) => `to must be a finite number; got ${describeReceived(issue.input)}` }).optional(),
  count: z
    .number({ error: (issue) => `count must be an integer ≥ 1; got ${describeReceived(issue.input)}` })
    // Aborting checks: the axis is expanded into count values by the whole-spec checks, which must never
    // see a negative, fractional or huge count (new Array(-1) is a RangeError, 1e9 an allocation).
    .int({ error: "count must be an integer ≥ 1", abort: true })
    .min(1, { error: "count must be an integer ≥ 1", abort: true })
    .max(SPEC_LIMITS.maxCellsPerSweep, { error: `count must be at most ${SPEC_LIMITS.maxCellsPerSweep} (the cells of a whole sweep)`, abort: true })
    .optional(),
  values: z
    .array(z.union([z.number(), z.string()], { error: "each value must be a finite number or a choice name" }))
    .min(1, { error: "values must list at least one value" })
    .max(SPEC_LIMITS.maxPairs, { abort: true, error: `values may list at most ${SPEC_LIMITS.maxListValues} entries (${SPEC_LIMITS.maxPairs} on a scene.pair axis)` })
    .optional(),
  /** scene.pair only: what each value (a pair name) sets, in the order of values. */
  pairs: z.array(axisPairSchema).min(1, { error: "pairs must list at least one pair" }).max(SPEC_LIMITS.maxPairs, { abort: true, error: `pairs may list at most ${SPEC_LIMITS.maxPairs} entries` }).optional(),
});

export type AxisSpec = z.infer<typeof axisSchema>;
// What lib/sweeps/axes.ts reads of an axis: the schema's output must stay assignable to it.
const axisMatchesHelpers: Assignable<AxisSpec, AxisFields> = true;
void axisMatchesHelpers;

// ---------------------------------------------------------------------------
// Checks that need a whole scenario (run on the base and on every corner of the grid)

interface ScenarioProblem {
  /** Stable id of the check, to report each check once. */
  check: string;
  /** Scenario fields the check depends on, first the most telling one. */
  paths: string[];
  message: string;
  /** How far past the limit (value / limit); the worst corner is reported. */
  severity: number;
}

function scenarioProblems(scenario: Scenario): ScenarioProblem[] {
  const problems: ScenarioProblem[] = [];
  const { contact, scene } = scenario;

  if (contact.model === "linear") {
    if (contact.stiffness === undefined) {
      problems.push({ check: "linear-stiffness", paths: ["contact.model", "contact.stiffness"], message: "the linear contact model needs contact.stiffness (N/m)", severity: 1 });
    }
    if (contact.material !== undefined) {
      problems.push({ check: "linear-material", paths: ["contact.model", "contact.material"], message: "contact.material applies to the hertz model only; the linear model takes contact.stiffness", severity: 1 });
    }
  } else if ((contact.stiffness === undefined) === (contact.material === undefined)) {
    problems.push({
      check: "hertz-stiffness",
      paths: ["contact.model", "contact.stiffness"],
      message: "the hertz contact model needs exactly one of contact.stiffness (N/m^1.5) or contact.material",
      severity: 1,
    });
  }
  if (contact.wall !== undefined && (contact.model !== "hertz" || contact.material === undefined)) {
    problems.push({ check: "wall-material", paths: ["contact.wall", "contact.material"], message: "contact.wall applies to the hertz model with contact.material only (a given stiffness is used at walls as it is)", severity: 1 });
  }

  const subStepS = scenario.dtS / scenario.substeps;
  if (scenario.durationS < subStepS) {
    problems.push({
      check: "duration-below-step",
      paths: ["durationS", "dtS", "substeps"],
      message: `durationS ${scenario.durationS} s is shorter than one integrator step (dtS / substeps = ${subStepS} s)`,
      severity: subStepS / scenario.durationS,
    });
  }
  const steps = (scenario.durationS * scenario.substeps) / scenario.dtS;
  if (steps > SPEC_LIMITS.maxStepsPerCell) {
    problems.push({
      check: "steps-per-cell",
      paths: ["dtS", "substeps", "durationS"],
      message: `steps per cell (durationS ${scenario.durationS} s × substeps ${scenario.substeps} / dtS ${scenario.dtS} s = ${formatLimit(Math.ceil(steps))}) exceed the limit of ${formatLimit(SPEC_LIMITS.maxStepsPerCell)}`,
      severity: steps / SPEC_LIMITS.maxStepsPerCell,
    });
  }

  if (scene.kind === "pair") {
    const massBRule = numericRule("scene.massBKg", "pair");
    const massProblem = rangeViolation(massBRule, scene.massBKg);
    if (massProblem) {
      problems.push({ check: "mass-b", paths: ["scene.massRatio", "scene.massBKg", "scene.massAKg"], message: massProblem, severity: 2 });
    }
    if (!(scene.speedAMPerS + scene.speedBMPerS > 0)) {
      problems.push({
        check: "pair-approach",
        paths: ["scene.speedAMPerS", "scene.speedBMPerS"],
        message: "scene.speedAMPerS + scene.speedBMPerS must be > 0 so the discs approach; got 0",
        severity: 1,
      });
    }
  }

  if (scene.kind === "row" || scene.kind === "box" || scene.kind === "snapshot") {
    const bodies = bodyCount(scenario);
    const countPath = scene.kind === "snapshot" ? "scene.bodies" : "scene.count";
    if (bodies > SPEC_LIMITS.maxBodies) {
      problems.push({
        check: "bodies",
        paths: [countPath],
        message: `${formatLimit(bodies)} bodies exceed the limit of ${formatLimit(SPEC_LIMITS.maxBodies)}`,
        severity: bodies / SPEC_LIMITS.maxBodies,
      });
    }
    const bodySteps = bodies * Math.ceil(steps);
    if (bodySteps > SPEC_LIMITS.maxBodyStepsPerCell) {
      problems.push({
        check: "body-steps",
        paths: [countPath, "dtS", "durationS", "substeps"],
        message: `bodies × steps per cell (${formatLimit(bodies)} × ${formatLimit(Math.ceil(steps))}) exceed the limit of ${formatLimit(SPEC_LIMITS.maxBodyStepsPerCell)}`,
        severity: bodySteps / SPEC_LIMITS.maxBodyStepsPerCell,
      });
    }
  }

  if (scene.kind === "box") {
    // The engine's own layout rule (one disc per grid cell wider than a diameter), so a spec
    // accepted here is one the engine can lay out.
    const layoutProblem = boxSceneProblem(scene);
    if (layoutProblem) {
      const areaFraction = (scene.count * Math.PI * scene.radiusM * scene.radiusM) / (scene.widthM * scene.heightM);
      problems.push({
        check: "box-layout",
        paths: ["scene.count", "scene.radiusM", "scene.widthM", "scene.heightM"],
        message: layoutProblem,
        severity: areaFraction,
      });
    }
  }
  return problems;
}

// ---------------------------------------------------------------------------
// The sweep spec

const sweepSpecObject = z.strictObject({
  /** Format version of the spec; 1 is the only one so far. */
  version: z.literal(1, { error: "version must be 1" }).default(1),
  name: z
    .string({ error: "name must be a string" })
    .max(SPEC_LIMITS.maxNameLength, { error: `name may have at most ${SPEC_LIMITS.maxNameLength} characters` })
    .optional(),
  scenario: scenarioSchema,
  axes: z
    .array(axisSchema)
    .max(SPEC_LIMITS.maxAxes, { abort: true, error: `a sweep has at most ${SPEC_LIMITS.maxAxes} axes` })
    .default(() => []),
});

type AddIssue = (path: (string | number)[], message: string) => void;

/** Per-axis checks; returns the axis values when the axis is sound. */
function checkAxis(axis: AxisSpec, index: number, scenario: Scenario, addIssue: AddIssue): (number | string)[] | null {
  const at = (...rest: (string | number)[]) => ["axes", index, ...rest];
  const sceneKind = scenario.scene.kind;
  if (axis.parameter === PAIR_AXIS_PATH) return checkPairAxis(axis, scenario, at, addIssue);
  if (axis.pairs !== undefined) {
    addIssue(at("pairs"), `pairs belong to a ${PAIR_AXIS_PATH} axis only`);
    return null;
  }
  if (axis.values !== undefined && axis.values.length > SPEC_LIMITS.maxListValues) {
    addIssue(at("values"), `values may list at most ${SPEC_LIMITS.maxListValues} entries`);
    return null;
  }
  if (!SWEEPABLE_PATHS.includes(axis.parameter)) {
    addIssue(at("parameter"), `unknown parameter "${axis.parameter}"; sweepable parameters: ${SWEEPABLE_PATHS.join(", ")}`);
    return null;
  }
  const parameter = findParameter(axis.parameter, sceneKind);
  if (!parameter) {
    addIssue(at("parameter"), `${axis.parameter} does not apply to the ${sceneKind} scene (it applies to: ${scenesOfPath(axis.parameter).join(", ")})`);
    return null;
  }

  // Parameters that exist only with a matching contact set-up.
  const contact = scenario.contact;
  const needs = (condition: boolean, message: string) => {
    if (!condition) addIssue(at("parameter"), message);
    return condition;
  };
  if (axis.parameter === "contact.stiffness" && !needs(contact.material === undefined, "contact.stiffness cannot be swept while contact.material sets the Hertz stiffness")) return null;
  if (axis.parameter.startsWith("contact.material.") && !needs(contact.material !== undefined, `${axis.parameter} needs contact.material in the scenario`)) return null;
  if (axis.parameter === "contact.damping.coefficient" && !needs(contact.damping.kind === "coefficient", `contact.damping.coefficient needs scenario.contact.damping.kind "coefficient"; it is "${contact.damping.kind}"`)) return null;
  if (axis.parameter === "contact.damping.restitution" && !needs(contact.damping.kind === "restitution", `contact.damping.restitution needs scenario.contact.damping.kind "restitution"; it is "${contact.damping.kind}"`)) return null;

  if (parameter.kind === "choice") {
    if (!axis.values || axis.spacing !== undefined || axis.from !== undefined || axis.to !== undefined || axis.count !== undefined) {
      addIssue(at("values"), `${axis.parameter} is a choice: list the choices in values (${parameter.choices.join(", ")}), without spacing, from, to or count`);
      return null;
    }
    let sound = true;
    axis.values.forEach((value, j) => {
      if (typeof value !== "string" || !parameter.choices.includes(value)) {
        addIssue(at("values", j), `${axis.parameter} must be one of ${parameter.choices.join(", ")}; got ${JSON.stringify(value)}`);
        sound = false;
      }
    });
    if (!sound) return null;
    if (new Set(axis.values).size !== axis.values.length) {
      addIssue(at("values"), `values of ${axis.parameter} must be distinct`);
      return null;
    }
    return [...axis.values];
  }

  // Numeric parameter: either a range or a list of numbers.
  if (axis.values !== undefined) {
    if (axis.spacing !== undefined || axis.from !== undefined || axis.to !== undefined || axis.count !== undefined) {
      addIssue(at("values"), "give either values or spacing/from/to/count, not both");
      return null;
    }
    let sound = true;
    axis.values.forEach((value, j) => {
      const problem = typeof value === "number" ? rangeViolation(parameter, value) : `${parameter.label} must be a number; got ${JSON.stringify(value)}`;
      if (problem) {
        addIssue(at("values", j), problem);
        sound = false;
      }
    });
    if (!sound) return null;
    if (new Set(axis.values).size !== axis.values.length) {
      addIssue(at("values"), `values of ${axis.parameter} must be distinct`);
      return null;
    }
    return [...axis.values];
  }

  let sound = true;
  for (const key of ["spacing", "from", "to", "count"] as const) {
    if (axis[key] === undefined) {
      addIssue(at(key), `${key} is required for a range axis of ${axis.parameter} (or give values)`);
      sound = false;
    }
  }
  if (!sound) return null;
  for (const key of ["from", "to"] as const) {
    // Whole-number parameters are checked for integer ends below, with a clearer message.
    const problem = rangeViolation({ ...parameter, integer: false }, axis[key] as number);
    if (problem) {
      addIssue(at(key), problem);
      sound = false;
    }
  }
  if (!sound) return null;
  const from = axis.from as number;
  const to = axis.to as number;
  const count = axis.count as number;
  if (axis.spacing === "log" && !(from > 0 && to > 0)) {
    addIssue(at(from > 0 ? "to" : "from"), `log spacing needs from and to > 0; got from ${from}, to ${to}`);
    return null;
  }
  if (count === 1 && from !== to) {
    addIssue(at("count"), `count 1 takes a single value: set from = to (got from ${from}, to ${to}) or use values`);
    return null;
  }
  if (count > 1 && from === to) {
    addIssue(at("count"), `from = to = ${from} gives one value; count must be 1 (got ${count})`);
    return null;
  }
  if (count > SPEC_LIMITS.maxCellsPerSweep) {
    addIssue(at("count"), `count ${formatLimit(count)} exceeds the limit of ${formatLimit(SPEC_LIMITS.maxCellsPerSweep)} cells per sweep`);
    return null;
  }
  const values = axisValues(axis, parameter.integer);
  if (parameter.integer) {
    for (const key of ["from", "to"] as const) {
      if (!Number.isInteger(axis[key])) {
        addIssue(at(key), `${parameter.label} is a whole number: ${key} must be an integer; got ${axis[key]}`);
        return null;
      }
    }
    const distinct = new Set(values).size;
    if (distinct !== values.length) {
      addIssue(at("count"), `${parameter.label} is a whole number: from ${from} to ${to} gives only ${distinct} distinct values with ${axis.spacing} spacing; count ${count} asked`);
      return null;
    }
  }
  return values;
}

/** Scene fields a pair axis sets: no other axis may sweep them. */
const PAIR_AXIS_FIELDS = ["scene.massAKg", "scene.massBKg", "scene.massRatio", "scene.radiusAM", "scene.radiusBM", "scene.speedAMPerS", "scene.speedBMPerS"];

/** A scene.pair axis: a list of pair names in values, each defined once, in the same order, in pairs. */
function checkPairAxis(axis: AxisSpec, scenario: Scenario, at: (...rest: (string | number)[]) => (string | number)[], addIssue: AddIssue): string[] | null {
  if (scenario.scene.kind !== "pair") {
    addIssue(at("parameter"), `${PAIR_AXIS_PATH} applies to the pair scene only (the scenario's scene is ${scenario.scene.kind})`);
    return null;
  }
  if (axis.spacing !== undefined || axis.from !== undefined || axis.to !== undefined || axis.count !== undefined) {
    addIssue(at("values"), `${PAIR_AXIS_PATH} is a list axis: give values (pair names) and pairs, without spacing, from, to or count`);
    return null;
  }
  if (!axis.values || !axis.pairs) {
    addIssue(at(axis.values ? "pairs" : "values"), `${PAIR_AXIS_PATH} needs values (the pair names) and pairs (what each name sets), in the same order`);
    return null;
  }
  if (axis.values.length !== axis.pairs.length) {
    addIssue(at("pairs"), `values list ${axis.values.length} pair names but pairs defines ${axis.pairs.length}`);
    return null;
  }
  let sound = true;
  axis.values.forEach((value, j) => {
    if (value !== axis.pairs?.[j].name) {
      addIssue(at("values", j), `values.${j} must be the name of pairs.${j} (${JSON.stringify(axis.pairs?.[j].name)}); got ${JSON.stringify(value)}`);
      sound = false;
    }
  });
  if (!sound) return null;
  if (new Set(axis.values).size !== axis.values.length) {
    addIssue(at("values"), `pair names on ${PAIR_AXIS_PATH} must be distinct`);
    return null;
  }
  const perPairStiffness = axis.pairs.some((pair) => pair.stiffness !== undefined);
  if (perPairStiffness && !axis.pairs.every((pair) => pair.stiffness !== undefined)) {
    addIssue(at("pairs"), "give a stiffness for every pair or for none");
    return null;
  }
  if (perPairStiffness && scenario.contact.material !== undefined) {
    addIssue(at("pairs"), "pairs with their own stiffness cannot be used while contact.material sets the Hertz stiffness");
    return null;
  }
  const perPairRestitution = axis.pairs.some((pair) => pair.restitution !== undefined);
  if (perPairRestitution && !axis.pairs.every((pair) => pair.restitution !== undefined)) {
    addIssue(at("pairs"), "give a restitution for every pair or for none");
    return null;
  }
  if (perPairRestitution && scenario.contact.damping.kind !== "restitution") {
    addIssue(at("pairs"), `pairs with their own restitution need scenario.contact.damping.kind "restitution"; it is "${scenario.contact.damping.kind}"`);
    return null;
  }
  for (const field of ["friction", "rollingResistance"] as const) {
    const given = axis.pairs.filter((pair) => pair[field] !== undefined).length;
    if (given > 0 && given < axis.pairs.length) {
      addIssue(at("pairs"), `give a ${field === "friction" ? "friction" : "rollingResistance"} for every pair or for none`);
      return null;
    }
  }
  for (const [j, pair] of axis.pairs.entries()) {
    if (!(pair.speedAMPerS + pair.speedBMPerS > 0)) {
      addIssue(at("pairs", j), `pair ${JSON.stringify(pair.name)}: speedAMPerS + speedBMPerS must be > 0 so the discs approach`);
      return null;
    }
  }
  return [...axis.values] as string[];
}

function cartesian<T>(lists: readonly (readonly T[])[]): T[][] {
  let combos: T[][] = [[]];
  for (const list of lists) {
    const next: T[][] = [];
    for (const combo of combos) for (const item of list) next.push([...combo, item]);
    combos = next;
  }
  return combos;
}

/** The values of an axis that bound every monotone limit: the smallest and largest number, or every choice. */
function extremes(values: readonly (number | string)[]): (number | string)[] {
  if (typeof values[0] === "string") return [...values];
  const numbers = values as number[];
  let lo = numbers[0];
  let hi = numbers[0];
  for (const value of numbers) {
    if (value < lo) lo = value;
    if (value > hi) hi = value;
  }
  return lo === hi ? [lo] : [lo, hi];
}

/**
 * The cells at the corners of a parsed spec's grid (each numeric axis at its ends, every choice):
 * every limit that is monotone in each parameter (steps per cell, bodies) is at its worst in one of
 * them, so quotas can be checked without visiting every cell.
 */
export function cornerScenarios(spec: SweepSpec): Scenario[] {
  const sceneKind = spec.scenario.scene.kind;
  const lists = spec.axes.map((axis) => extremes(axisValues(axis, isIntegerParameter(axis.parameter, sceneKind))));
  return cartesian(lists).map((corner) => applyAxisValues(spec.scenario as Scenario, spec.axes, corner));
}

function describeCorner(axes: readonly AxisSpec[], corner: readonly (number | string)[]): string {
  return axes.map((axis, i) => `${axis.parameter} = ${corner[i]}`).join(", ");
}

function checkSweep(spec: z.output<typeof sweepSpecObject>, addIssue: AddIssue): void {
  const scenario = spec.scenario as Scenario;
  const axisValueLists: (number | string)[][] = [];
  let axesSound = true;

  const seen = new Map<string, number>();
  spec.axes.forEach((axis, i) => {
    const earlier = seen.get(axis.parameter);
    if (earlier !== undefined) {
      addIssue(["axes", i, "parameter"], `${axis.parameter} is already swept by axes.${earlier}`);
      axesSound = false;
      return;
    }
    seen.set(axis.parameter, i);
    const values = checkAxis(axis, i, scenario, addIssue);
    if (values) axisValueLists.push(values);
    else axesSound = false;
  });
  const pairAxis = seen.get(PAIR_AXIS_PATH);
  if (pairAxis !== undefined) {
    for (const field of PAIR_AXIS_FIELDS) {
      const clash = seen.get(field);
      if (clash !== undefined) {
        addIssue(["axes", clash, "parameter"], `${field} is set by the ${PAIR_AXIS_PATH} axis (axes.${pairAxis}): it cannot be swept as well`);
        axesSound = false;
      }
    }
    const stiffnessAxis = seen.get("contact.stiffness");
    if (stiffnessAxis !== undefined && spec.axes[pairAxis].pairs?.some((pair) => pair.stiffness !== undefined)) {
      addIssue(["axes", stiffnessAxis, "parameter"], `contact.stiffness is set per pair by the ${PAIR_AXIS_PATH} axis (axes.${pairAxis}): it cannot be swept as well`);
      axesSound = false;
    }
    const restitutionAxis = seen.get("contact.damping.restitution");
    if (restitutionAxis !== undefined && spec.axes[pairAxis].pairs?.some((pair) => pair.restitution !== undefined)) {
      addIssue(["axes", restitutionAxis, "parameter"], `contact.damping.restitution is set per pair by the ${PAIR_AXIS_PATH} axis (axes.${pairAxis}): it cannot be swept as well`);
      axesSound = false;
    }
    for (const [field, path] of [
      ["friction", "contact.friction.coefficient"],
      ["rollingResistance", "contact.rollingResistance"],
    ] as const) {
      const clash = seen.get(path);
      if (clash !== undefined && spec.axes[pairAxis].pairs?.some((pair) => pair[field] !== undefined)) {
        addIssue(["axes", clash, "parameter"], `${path} is set per pair by the ${PAIR_AXIS_PATH} axis (axes.${pairAxis}): it cannot be swept as well`);
        axesSound = false;
      }
    }
  }
  if (seen.has("scene.massRatio") && seen.has("scene.massBKg")) {
    addIssue(["axes", seen.get("scene.massRatio") as number, "parameter"], "scene.massRatio sets massBKg: it cannot be swept together with scene.massBKg");
    axesSound = false;
  }

  if (!axesSound) {
    // Still check the base scenario on its own.
    for (const problem of scenarioProblems(scenario)) addIssue(["scenario", ...problem.paths[0].split(".")], problem.message);
    return;
  }

  const cells = axisValueLists.reduce((product, values) => product * values.length, 1);
  if (cells > SPEC_LIMITS.maxCellsPerSweep) {
    addIssue(
      ["axes"],
      `${formatLimit(cells)} cells (${axisValueLists.map((values) => formatLimit(values.length)).join(" × ")}) exceed the limit of ${formatLimit(SPEC_LIMITS.maxCellsPerSweep)} cells per sweep`,
    );
    return;
  }

  // Every limit below is monotone in each parameter, so the corners of the
  // grid (each axis at its smallest and largest value, every choice) bound all cells.
  const worst = new Map<string, { problem: ScenarioProblem; corner: (number | string)[] }>();
  for (const corner of cartesian(axisValueLists.map(extremes))) {
    const cellScenario = applyAxisValues(scenario, spec.axes, corner);
    for (const problem of scenarioProblems(cellScenario)) {
      const known = worst.get(problem.check);
      if (!known || problem.severity > known.problem.severity) worst.set(problem.check, { problem, corner });
    }
  }
  for (const { problem, corner } of worst.values()) {
    const axisIndex = spec.axes.findIndex((axis) => problem.paths.includes(axis.parameter));
    if (axisIndex >= 0) {
      addIssue(["axes", axisIndex], `at ${describeCorner(spec.axes, corner)}: ${problem.message}`);
    } else {
      addIssue(["scenario", ...problem.paths[0].split(".")], spec.axes.length ? `${problem.message} (at ${describeCorner(spec.axes, corner)})` : problem.message);
    }
  }
}

export const sweepSpecSchema = sweepSpecObject.superRefine((spec, ctx) => {
  checkSweep(spec, (path, message) => ctx.addIssue({ code: "custom", path, message }));
});

export type SweepSpecInput = z.input<typeof sweepSpecSchema>;
/** A parsed, valid sweep spec; its scenario is exactly a `Scenario`. */
export type SweepSpec = Omit<z.output<typeof sweepSpecSchema>, "scenario"> & { scenario: Scenario };

// The scenario schema's output must be assignable to the engine's Scenario, and a Scenario must be
// a valid input (its verdict rules and newer tolerances are optional: absent in stored specs).
type ParsedScenario = z.output<typeof scenarioSchema>;
type Assignable<From, To> = [From] extends [To] ? true : false;
const scenarioMatchesContract: [Assignable<ParsedScenario, Scenario>, Assignable<Scenario, z.input<typeof scenarioSchema>>] = [true, true];
void scenarioMatchesContract;

// ---------------------------------------------------------------------------
// Parsing with field errors

export interface SpecIssue {
  /** Dotted path of the field, e.g. "axes.0.from" or "scenario.scene.massAKg". */
  field: string;
  message: string;
}

/** Flatten zod issues into field paths; unknown keys name the key itself. */
export function specIssues(error: z.ZodError): SpecIssue[] {
  const issues: SpecIssue[] = [];
  for (const issue of error.issues) {
    const base = issue.path.map(String);
    if (issue.code === "unrecognized_keys") {
      for (const key of issue.keys) issues.push({ field: [...base, key].join("."), message: `unknown field "${key}"` });
    } else {
      issues.push({ field: base.join(".") || "(spec)", message: issue.message });
    }
  }
  return issues;
}

export type ParseSpecResult = { ok: true; spec: SweepSpec } | { ok: false; issues: SpecIssue[] };

/** Parse an unknown value (e.g. JSON from a file or a request body) into a sweep spec. */
export function parseSweepSpec(input: unknown): ParseSpecResult {
  const result = sweepSpecSchema.safeParse(input);
  if (result.success) return { ok: true, spec: result.data };
  return { ok: false, issues: specIssues(result.error) };
}

/** The numeric value of a parameter in a scenario (for axis labels of a single-value sweep). */
export function scenarioValue(scenario: Scenario, path: string): number | string | undefined {
  if (path === "integrator") return scenario.integrator;
  if (path === "contact.model") return scenario.contact.model;
  if (path === "contact.damping.coefficient" || path === "contact.damping.restitution") {
    return scenario.contact.damping.kind === "none" ? undefined : scenario.contact.damping.value;
  }
  return readNumericField(scenario, path);
}

/**
 * A stored spec as the starting point of a new one ("duplicate and edit"): everything as it ran,
 * without its name (the copy gets its own). The stored spec is the parsed one, defaults filled in,
 * which the schema accepts again as input.
 */
export function duplicateSpec(spec: SweepSpec): SweepSpecInput {
  const copy = structuredClone(spec) as unknown as SweepSpecInput;
  return { ...copy, name: "" };
}
