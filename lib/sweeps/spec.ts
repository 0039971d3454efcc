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
import { describeSnapshotOverlap, snapshotOverlaps } from "../physics/scenes";
import { VERDICT_RULES_VERSION, VERDICT_RULES_VERSIONS, type Scenario, type SceneKind, type Tolerances } from "../physics/types";
import {
  SPEC_LIMITS,
  formatLimit,
  numericRule,
  rangeViolation,
  readNumericField,
  SNAPSHOT_FIELD_RULES,
  type NumericParameter,
} from "./parameters";

export { SPEC_LIMITS, SWEEPABLE_PARAMETERS, parametersForScene } from "./parameters";
export { axisValues, bodyCount, stepsPerCell } from "./axes";
export { cornerScenarios } from "./spec-corners";
import type { AxisFields } from "./axes";
import { checkSweep } from "./spec-rules";

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
  // Used by verdict rules 2 (lib/physics/verdicts.ts judgeByRules2); defaults and their basis in lib/physics/constants.ts.
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

/** The spec schema with its whole-spec rules (axes, clashes, cell limit, grid corners: ./spec-rules.ts). */
export const sweepSpecSchema = sweepSpecObject.superRefine((spec, ctx) => {
  checkSweep(spec.scenario as Scenario, spec.axes, (path, message) => ctx.addIssue({ code: "custom", path, message }));
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
