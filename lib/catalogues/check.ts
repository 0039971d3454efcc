/**
 * Catalogue checks: a game's contact settings and a catalogue of its objects become one pair
 * sweep (lib/sweeps: a scene.pair axis over every unordered pair of objects × a
 * scene.closingSpeedFraction axis × an impact-offset axis), which is quoted, queued, billed and
 * cached like any sweep. Its cells become the pair matrix; the analytic bound ω·h < 2 gives the
 * recommended stiffness and substeps.
 *
 * Pure: safe to import in the browser.
 */
import { z } from "@/lib/zod";
import {
  hertzContactDurationS,
  hertzMaxOverlapM,
  linearAngularFrequencyRadPerS,
  linearDampingCoefficientNsPerM,
  linearMaxOverlapM,
  pairTunnelingThresholdSpeedMPerS,
} from "../physics/analytic";
import { linearDampingRatioForRestitution } from "../physics/damping";
import { DEFAULT_TOLERANCES } from "../physics/constants";
import { VERDICT_PRECEDENCE, VERDICTS, type Verdict } from "../physics/types";
import { formatLimit, numericRule, rangeViolation, SPEC_LIMITS } from "../sweeps/parameters";
import type { CellResult } from "../sweeps/results";
import type { AxisPair, SweepSpecInput } from "../sweeps/spec";
import type { CatalogueObject } from "./format";
import { frictionCheck, pairFrictionCoefficient, pairRollingResistance, type FrictionCheck } from "./friction-check";
import { allowedPhase, cataloguePairs, CheckInputError, pairOmegaRadPerS, type CataloguePair } from "./pairs";

export { cataloguePairs, CheckInputError, type CataloguePair } from "./pairs";

// ---------------------------------------------------------------------------
// Settings

function ruled(path: string) {
  return sceneRuled(path, "pair");
}

function sceneRuled(path: string, scene: Parameters<typeof numericRule>[1]) {
  const rule = numericRule(path, scene);
  return z.number({ error: `${rule.label} must be a number${rule.unit ? ` (${rule.unit})` : ""}` }).superRefine((value, ctx) => {
    const problem = rangeViolation(rule, value);
    if (problem) ctx.addIssue({ code: "custom", message: problem });
  });
}

export const CHECK_LIMITS = { maxSpeedSteps: 16, maxOffsets: 4, maxMargin: 0.9 } as const;
export const CHECK_DEFAULT_TOLERANCES = { energyDriftRel: 0.1, maxOverlapFraction: 0.1 } as const;

/** The game's settings a check runs with. */
export const checkSettingsSchema = z.strictObject({
  /** Frame step (s). */
  dtS: ruled("dtS"),
  substeps: ruled("substeps").default(1),
  integrator: z.enum(["symplectic-euler", "velocity-verlet", "explicit-euler"], { error: "integrator must be symplectic-euler, velocity-verlet or explicit-euler" }),
  contactModel: z.enum(["linear", "hertz"], { error: "contactModel must be linear or hertz" }).default("linear"),
  /** One stiffness for every pair (N/m linear, N/m^1.5 Hertz); with groupStiffness, the stiffness of objects without a listed group. */
  stiffness: ruled("contact.stiffness").optional(),
  /** Stiffness per object group; a pair takes the harmonic mean 2·kA·kB/(kA + kB) of its two objects. */
  groupStiffness: z
    .record(z.string().max(80, { error: "a group name has at most 80 characters" }).regex(/^[^\u0000-\u001f\u007f]+$/, { error: "a group name must not be empty or hold control characters" }), ruled("contact.stiffness"))
    .optional(),
  /** "catalogue": each pair's target restitution is the smaller of its two objects'; "none": undamped contacts. */
  damping: z.enum(["catalogue", "none"], { error: "damping must be catalogue or none" }).default("catalogue"),
  /** Closing speeds per pair: speedSteps evenly spaced fractions of the pair's closing speed, up to 1. */
  speedSteps: z.number().int({ error: "speedSteps must be an integer" }).min(2, { error: "speedSteps must be ≥ 2" }).max(CHECK_LIMITS.maxSpeedSteps, { error: `speedSteps must be ≤ ${CHECK_LIMITS.maxSpeedSteps}` }).default(6),
  /** Impact offsets (fractions of the sum of radii, 0 head-on). */
  offsets: z
    .array(ruled("scene.offsetFraction"))
    .min(1, { error: "offsets must list at least one offset" })
    .max(CHECK_LIMITS.maxOffsets, { error: `offsets may list at most ${CHECK_LIMITS.maxOffsets} values` })
    .refine((list) => new Set(list).size === list.length, { error: "offsets must be distinct" })
    .default(() => [0, 0.6]),
  /**
   * Verdict tolerances of the check's cells. Defaults for game contacts (common practice): the
   * measured restitution within 10 % of the target (relative, either way; energyDriftRel is used for
   * both), overlap up to 10 % of the smaller radius.
   */
  tolerances: z
    .strictObject({
      energyDriftRel: z.number({ error: "tolerances.energyDriftRel must be a number" }).gt(0, { error: "tolerances.energyDriftRel must be > 0" }).max(10, { error: "tolerances.energyDriftRel must be ≤ 10" }),
      maxOverlapFraction: z.number({ error: "tolerances.maxOverlapFraction must be a number" }).gt(0, { error: "tolerances.maxOverlapFraction must be > 0" }).max(1, { error: "tolerances.maxOverlapFraction must be ≤ 1" }),
    })
    .default(() => ({ ...CHECK_DEFAULT_TOLERANCES })),
  /** Share of the stability bound kept in reserve, as a fraction (screens show it in percent): recommendations keep ω·h ≤ 2·(1 − margin). */
  margin: z
    .number({ error: "margin must be a number (a fraction: 0.8 is 80 %)" })
    .min(0, { error: "margin must be ≥ 0 (0 %)" })
    .max(CHECK_LIMITS.maxMargin, { error: `margin must be ≤ ${CHECK_LIMITS.maxMargin} (${CHECK_LIMITS.maxMargin * 100} %)` })
    .default(0.8),
  /**
   * Friction settings, read only when catalogue objects give μ or μ_r (lib/catalogues/friction-check.ts).
   * No defaults here on purpose: a check stored before they existed parses to the same settings.
   * k_t/k of the game's tangential springs (absent: the engine's 2/7).
   */
  frictionStiffnessRatio: ruled("contact.friction.stiffnessRatio").optional(),
  /** Gravity for resting overlap and sliding (m/s²; absent: 9.81). */
  gravityMPerS2: sceneRuled("scene.gravityMPerS2", "stack").optional(),
  /** The game's steepest slope (degrees from the horizontal): which objects hold still on it. */
  slopeAngleDeg: sceneRuled("scene.angleDeg", "slope").optional(),
});

export type CheckSettingsInput = z.input<typeof checkSettingsSchema>;
export type CheckSettings = z.output<typeof checkSettingsSchema>;

/** The closing-speed fractions of a check: speedSteps evenly spaced values ending at 1 (1/n, 2/n, … 1). */
export function speedFractions(settings: Pick<CheckSettings, "speedSteps">): number[] {
  return Array.from({ length: settings.speedSteps }, (_, i) => (i + 1) / settings.speedSteps);
}

/** Longest first contact among the pairs at their slowest checked speed (s). */
function longestContactS(pairs: readonly CataloguePair[], settings: CheckSettings): number {
  let longest = 0;
  const slowest = speedFractions(settings)[0];
  for (const pair of pairs) {
    const contactS =
      settings.contactModel === "linear"
        ? Math.PI / linearAngularFrequencyRadPerS(pair.stiffness, pair.reducedMassKg)
        : hertzContactDurationS(pair.stiffness, pair.reducedMassKg, slowest * pair.closingSpeedMPerS);
    if (contactS > longest) longest = contactS;
  }
  return longest;
}

/**
 * The sweep spec of a check. Gap: a quarter of the smallest radius. Duration: the slowest
 * approach over that gap plus three times the longest contact (the engine ends a pair run in one
 * jump once no further contact is possible, so the slack costs little), rounded up to whole frames.
 */
export function checkSpec(catalogueName: string, version: number, objects: readonly CatalogueObject[], settings: CheckSettings): SweepSpecInput {
  const pairs = cataloguePairs(objects, settings);
  if (pairs.length > SPEC_LIMITS.maxPairs) throw new CheckInputError("catalogue", `${formatLimit(pairs.length)} pairs exceed the limit of ${formatLimit(SPEC_LIMITS.maxPairs)}`);
  const fractions = speedFractions(settings);
  const smallestRadiusM = Math.min(...objects.map((object) => object.radiusM));
  const gapM = smallestRadiusM / 4;
  const slowestClosing = fractions[0] * Math.min(...pairs.map((pair) => pair.closingSpeedMPerS));
  const wantedS = gapM / slowestClosing + 3 * longestContactS(pairs, settings);
  const durationS = Math.max(1, Math.ceil(wantedS / settings.dtS)) * settings.dtS;
  const perPairStiffness = settings.groupStiffness !== undefined;
  // Friction in the simulated cells: only for catalogues that give μ or μ_r, so other checks' specs
  // (and with them their cache keys and stored results) are exactly as before friction existed.
  const withFriction = objects.some((object) => (object.friction ?? null) !== null);
  const withRolling = objects.some((object) => (object.rollingResistance ?? null) !== null);
  // Every pair gets a value when any does (the pair axis takes all or none): 0 where neither object gives one.
  const pairFriction = (pair: CataloguePair): Pick<AxisPair, "friction" | "rollingResistance"> => ({
    ...(withFriction ? { friction: pairFrictionCoefficient(pair.a, pair.b) ?? 0 } : {}),
    ...(withRolling ? { rollingResistance: pairRollingResistance(pair.a, pair.b) ?? 0 } : {}),
  });
  const axisPairs: AxisPair[] = pairs.map((pair) => ({
    name: pair.name,
    massAKg: pair.a.massKg,
    radiusAM: pair.a.radiusM,
    speedAMPerS: pair.a.topSpeedMPerS,
    massBKg: pair.b.massKg,
    radiusBM: pair.b.radiusM,
    speedBMPerS: pair.b.topSpeedMPerS,
    ...(perPairStiffness ? { stiffness: pair.stiffness } : {}),
    ...(settings.damping === "catalogue" ? { restitution: pair.restitution } : {}),
    ...pairFriction(pair),
  }));
  const first = pairs[0];
  return {
    name: `Catalogue check: ${catalogueName} v${version}`.slice(0, SPEC_LIMITS.maxNameLength),
    scenario: {
      scene: {
        kind: "pair",
        massAKg: first.a.massKg,
        massBKg: first.b.massKg,
        radiusAM: first.a.radiusM,
        radiusBM: first.b.radiusM,
        speedAMPerS: first.a.topSpeedMPerS,
        speedBMPerS: first.b.topSpeedMPerS,
        offsetFraction: 0,
        gapM,
      },
      contact: {
        model: settings.contactModel,
        stiffness: perPairStiffness ? first.stiffness : settings.stiffness,
        damping: settings.damping === "catalogue" ? { kind: "restitution", value: first.restitution } : { kind: "none" },
        // The tangential spring's k_t/k for every pair; each pair's μ comes with the pair axis.
        ...(withFriction ? { friction: { coefficient: axisPairs[0].friction ?? 0, ...(settings.frictionStiffnessRatio !== undefined ? { stiffnessRatio: settings.frictionStiffnessRatio } : {}) } } : {}),
      },
      integrator: settings.integrator,
      dtS: settings.dtS,
      substeps: settings.substeps,
      durationS,
      // The check's energy tolerance also bounds the rebound (verdict rules 2 judge it relative to
      // the target restitution): one number for "how far off may a bounce be" in the check's settings.
      tolerances: { ...DEFAULT_TOLERANCES, ...settings.tolerances, restitutionRel: settings.tolerances.energyDriftRel },
    },
    axes: [
      { parameter: "scene.pair", values: pairs.map((pair) => pair.name), pairs: axisPairs },
      { parameter: "scene.closingSpeedFraction", values: fractions },
      { parameter: "scene.offsetFraction", values: [...settings.offsets] },
    ],
  };
}

// ---------------------------------------------------------------------------
// The analytic bound and the recommendation

/** 1 − ω·h/2: the share of the bound ω·h < 2 left unused (negative past the bound). */
export function boundMargin(omegaRadPerS: number, substepS: number): number {
  return 1 - (omegaRadPerS * substepS) / 2;
}

/** Deepest overlap of a linear pair hit head-on at its closing speed, with its dashpot when the check damps. */
export function linearPairOverlapM(pair: CataloguePair, stiffness: number, settings: Pick<CheckSettings, "damping">): number {
  const dampingNsPerM =
    settings.damping === "catalogue" && pair.restitution < 1
      ? linearDampingCoefficientNsPerM(linearDampingRatioForRestitution(pair.restitution), stiffness, pair.reducedMassKg)
      : 0;
  return linearMaxOverlapM(stiffness, pair.reducedMassKg, pair.closingSpeedMPerS, dampingNsPerM);
}

export interface Recommendation {
  margin: number;
  /** The lightest reduced mass of the catalogue (kg) and its pair. */
  lightestReducedMassKg: number;
  lightestPair: string;
  /** Largest single stiffness with ω·h ≤ 2(1 − margin) for every pair at the game's substeps, or null. */
  stiffness: number | null;
  /** Why there is no stiffness recommendation, when there is none. */
  stiffnessNote: string;
  /** Smallest substep count that keeps every pair within the margin at the game's stiffness, or null. */
  substeps: number | null;
  substepsNote: string;
  /** What to do: always an action or a plain statement of what cannot work (see adviseCheck). */
  advice: Advice;
  /** Tangential stability, resting overlap and sliding; present only when objects give μ or μ_r (friction-check.ts). */
  friction?: FrictionCheck;
}

/** Settings that keep every pair within the margin with one stiffness for all. */
export interface AdvisedSettings {
  substeps: number;
  /** The advised stiffness: the stiffest in the range (shallowest overlap). */
  stiffness: number;
  stiffnessMin: number;
  stiffnessMax: number;
}

export interface ImpossiblePair {
  pair: string;
  /** Why, with the numbers. */
  reason: string;
  /** The highest closing speed at which the pair can be made stable at this frame rate (m/s), 0 when none. */
  highestClosingSpeedMPerS: number;
}

/**
 * The answer a check ends in: one of
 * - keep: the game's own settings keep every pair within the margin;
 * - stiffness: one stiffness in a range does it at the game's substeps;
 * - substeps: more substeps with one stiffness in a range do it;
 * - groups: no single stiffness fits every pair, but per-group stiffnesses can (each pair's range given);
 * - objects: some pairs cannot be made stable at this frame rate at any setting; which, why, and the
 *   object change (a lower top speed) that would make them possible.
 */
export interface Advice {
  kind: "keep" | "stiffness" | "substeps" | "groups" | "objects";
  /** One sentence: the action, or the plain statement. */
  summary: string;
  /** The numbers behind the summary, one sentence each. */
  details: string[];
  /** Settings that would work with one stiffness for every pair; null for keep, groups and objects. */
  settings: AdvisedSettings | null;
  /** Pairs that cannot be made stable at this frame rate (kind objects). */
  impossiblePairs: ImpossiblePair[];
}

/**
 * The recommendation from the bound ω·h < 2 (symplectic Euler and velocity Verlet on the linear
 * spring; see maxStableSubstepS in lib/physics/analytic.ts), with h = dt / substeps:
 *
 * - stiffness: the stiffest pair is the one with the lightest reduced mass m*, so one stiffness for
 *   all is k = m*_min · (2(1 − margin) / h)². It exists when, at that k, no pair sinks deeper than
 *   the overlap tolerance at its closing speed (linearMaxOverlapM, with the pair's dashpot when
 *   the check damps with the catalogue's restitution) and none tunnels
 *   (v·h below the head-on chord, the sum of radii, scaled by the margin's headroom).
 * - substeps: the smallest n with ω_max·dt/n ≤ 2(1 − margin) and v·dt/n ≤ (1 − margin)·R√(1 − f²)
 *   for every pair, at the game's own stiffness(es).
 */
export function recommend(objects: readonly CatalogueObject[], settings: CheckSettings): Recommendation {
  const pairs = cataloguePairs(objects, settings);
  const phase = allowedPhase(settings.margin);
  const substepS = settings.dtS / settings.substeps;
  const lightest = pairs.reduce((best, pair) => (pair.reducedMassKg < best.reducedMassKg ? pair : best), pairs[0]);
  const maxOffset = Math.max(...settings.offsets);
  const tunnelLimit = (pair: CataloguePair, h: number) => (1 - settings.margin) * pairTunnelingThresholdSpeedMPerS(pair.a.radiusM + pair.b.radiusM, h, maxOffset);
  const result: Recommendation = {
    margin: settings.margin,
    lightestReducedMassKg: lightest.reducedMassKg,
    lightestPair: lightest.name,
    stiffness: null,
    stiffnessNote: "",
    substeps: null,
    substepsNote: "",
    advice: { kind: "keep", summary: "", details: [], settings: null, impossiblePairs: [] },
  };

  if (settings.contactModel !== "linear") {
    result.stiffnessNote = "The single-stiffness rule is derived for the linear contact model; for Hertz contacts use the substep recommendation.";
  } else {
    const stiffness = lightest.reducedMassKg * (phase / substepS) ** 2;
    const tunnels = pairs.find((pair) => pair.closingSpeedMPerS > tunnelLimit(pair, substepS));
    const sinks = pairs.find((pair) => linearPairOverlapM(pair, stiffness, settings) > settings.tolerances.maxOverlapFraction * Math.min(pair.a.radiusM, pair.b.radiusM));
    if (tunnels) result.stiffnessNote = `No stiffness can help ${tunnels.name}: at ${settings.substeps} substeps it moves ${formatLimit(tunnels.closingSpeedMPerS * substepS)} m per substep at its closing speed, too close to tunnelling. Raise the substeps.`;
    else if (sinks) result.stiffnessNote = `At the largest stable stiffness (${formatLimit(Number(stiffness.toPrecision(3)))} N/m), ${sinks.name} still sinks deeper than ${settings.tolerances.maxOverlapFraction * 100} % of its smaller radius. Raise the substeps.`;
    else result.stiffness = stiffness;
  }

  for (let substeps = 1; substeps <= SPEC_LIMITS.maxSubsteps; substeps++) {
    const h = settings.dtS / substeps;
    const ok = pairs.every((pair) => pairOmegaRadPerS(pair, settings.contactModel) * h <= phase && pair.closingSpeedMPerS <= tunnelLimit(pair, h));
    if (ok) {
      result.substeps = substeps;
      break;
    }
  }
  if (result.substeps === null) result.substepsNote = `No substep count up to ${formatLimit(SPEC_LIMITS.maxSubsteps)} keeps every pair within the margin at this stiffness; see the advice for settings that do.`;
  result.advice = adviseCheck(pairs, settings, result);
  const friction = frictionCheck(objects, settings, result.substeps);
  if (friction) result.friction = friction;
  return result;
}

// ---------------------------------------------------------------------------
// The advice: every check ends in settings that work or a plain statement of what cannot

/** A number as the advice's sentences print it: three significant digits, grouped. */
function num(value: number, digits = 3): string {
  return Number(value.toPrecision(digits)).toLocaleString("en-US", { maximumSignificantDigits: digits });
}

export function stiffnessUnit(contactModel: CheckSettings["contactModel"]): string {
  return contactModel === "linear" ? "N/m" : "N/m^1.5";
}

/** Deepest overlap a pair may reach: the overlap tolerance times its smaller radius (m). */
function allowedOverlapM(pair: CataloguePair, settings: CheckSettings): number {
  return settings.tolerances.maxOverlapFraction * Math.min(pair.a.radiusM, pair.b.radiusM);
}

/**
 * Stiffness at which the pair's contact frequency is ω. Linear: k = m*·ω². Hertz (linearised as in
 * pairOmegaRadPerS): ω² = (3/2)·k^(4/5)·(5m*v²/4)^(1/5)/m*, solved for k.
 */
export function stiffnessAtOmega(pair: Pick<CataloguePair, "reducedMassKg" | "closingSpeedMPerS">, omegaRadPerS: number, contactModel: CheckSettings["contactModel"]): number {
  const m = pair.reducedMassKg;
  if (contactModel === "linear") return m * omegaRadPerS ** 2;
  const v = pair.closingSpeedMPerS;
  return Math.pow((omegaRadPerS * omegaRadPerS * m) / (1.5 * Math.pow(1.25 * m * v * v, 0.2)), 1.25);
}

/**
 * Smallest stiffness that keeps a pair's head-on overlap at its closing speed within the tolerance.
 * Linear: undamped k_u = m*·(v/δ)²; with the pair's dashpot at a fixed damping ratio the overlap is
 * (v/ω0)·g(ζ), so k = k_u·(g(ζ))² = k_u·(δ_damped(k_u)/δ)². Hertz (undamped, hertzMaxOverlapM
 * solved for k): k = (5/4)·m*·v²/δ^(5/2).
 */
export function minStiffnessForOverlap(pair: CataloguePair, settings: CheckSettings): number {
  const allowedM = allowedOverlapM(pair, settings);
  const m = pair.reducedMassKg;
  const v = pair.closingSpeedMPerS;
  if (settings.contactModel === "hertz") return (1.25 * m * v * v) / Math.pow(allowedM, 2.5);
  const undamped = (m * v * v) / (allowedM * allowedM);
  const ratio = linearPairOverlapM(pair, undamped, settings) / allowedM;
  return undamped * ratio * ratio;
}

/** Does the pair stay clear of tunnelling at substep h (with the margin's headroom)? */
function clearOfTunnelling(pair: CataloguePair, substepS: number, settings: CheckSettings): boolean {
  return pair.closingSpeedMPerS <= (1 - settings.margin) * pairTunnelingThresholdSpeedMPerS(pair.a.radiusM + pair.b.radiusM, substepS, Math.max(...settings.offsets));
}

/** Highest closing speed at which the pair alone can be kept within the margin at `substeps` (m/s); its own closing speed when it can. */
function highestFeasibleClosingSpeed(pair: CataloguePair, kMin: number, substeps: number, settings: CheckSettings): number {
  const h = settings.dtS / substeps;
  const kMax = stiffnessAtOmega(pair, allowedPhase(settings.margin) / h, settings.contactModel);
  // kMin grows as v² for both models; kMax is speed-free (linear) or falls as v^(−1/2) (Hertz).
  const bySpring = settings.contactModel === "linear" ? Math.sqrt(kMax / kMin) : Math.pow(kMax / kMin, 0.4);
  const tunnelSpeed = (1 - settings.margin) * pairTunnelingThresholdSpeedMPerS(pair.a.radiusM + pair.b.radiusM, h, Math.max(...settings.offsets));
  return Math.min(pair.closingSpeedMPerS, bySpring * pair.closingSpeedMPerS, tunnelSpeed);
}

/**
 * The advice of a check (see Advice). The stability bound ω·h ≤ 2(1 − margin) caps the stiffness
 * from above (the lightest, or for Hertz the fastest-ringing, pair decides); the overlap tolerance
 * floors it from below (the heaviest and fastest pair decides); tunnelling depends on the substep
 * only. More substeps raise the cap as n² and never move the floor, so the smallest substep count
 * with cap ≥ floor and no tunnelling is found by counting up to the spec's limit.
 */
export function adviseCheck(pairs: readonly CataloguePair[], settings: CheckSettings, found: Pick<Recommendation, "substeps">): Advice {
  const model = settings.contactModel;
  const unit = stiffnessUnit(model);
  const phase = allowedPhase(settings.margin);
  const n0 = settings.substeps;
  const nMax = SPEC_LIMITS.maxSubsteps;
  const frameHz = 1 / settings.dtS;
  const floors = pairs.map((pair) => minStiffnessForOverlap(pair, settings));
  let floorAt = 0;
  for (let p = 1; p < pairs.length; p++) if (floors[p] > floors[floorAt]) floorAt = p;
  const floor = floors[floorAt];
  const capAt = (n: number): { k: number; at: number } => {
    // The same arithmetic as the recommended stiffness (phase / h), so the two agree to the last bit.
    const omega = phase / (settings.dtS / n);
    let best = { k: Infinity, at: 0 };
    for (let p = 0; p < pairs.length; p++) {
      const k = stiffnessAtOmega(pairs[p], omega, model);
      if (k < best.k) best = { k, at: p };
    }
    return best;
  };
  const tunnelsAt = (n: number) => pairs.find((pair) => !clearOfTunnelling(pair, settings.dtS / n, settings));
  const works = (n: number) => tunnelsAt(n) === undefined && floor <= capAt(n).k;
  const why = (n: number): string => {
    const tunnels = tunnelsAt(n);
    if (tunnels) {
      return `At ${formatLimit(n)} substeps ${tunnels.name} moves ${num(tunnels.closingSpeedMPerS * (settings.dtS / n))} m per substep at ${num(tunnels.closingSpeedMPerS)} m/s, too close to passing through (its radii add up to ${num(tunnels.a.radiusM + tunnels.b.radiusM)} m).`;
    }
    const cap = capAt(n);
    return `At ${formatLimit(n)} substeps the bound ω·h ≤ ${num(phase)} lets ${pairs[cap.at].name} take at most ${num(cap.k)} ${unit}, but ${pairs[floorAt].name} needs at least ${num(floor)} ${unit} to stay within the overlap tolerance (${num(allowedOverlapM(pairs[floorAt], settings))} m at ${num(pairs[floorAt].closingSpeedMPerS)} m/s).`;
  };

  // The game's own settings, pair by pair at their own stiffness.
  const h0 = settings.dtS / n0;
  // Settings advised at a range's edge must read as holding when applied: allow rounding in the last bits.
  const within = (value: number, limit: number) => value <= limit * (1 + 1e-9);
  const ownOk = pairs.every(
    (pair) =>
      within(pairOmegaRadPerS(pair, model) * h0, phase) &&
      within(model === "linear" ? linearPairOverlapM(pair, pair.stiffness, settings) : hertzMaxOverlapM(pair.stiffness, pair.reducedMassKg, pair.closingSpeedMPerS), allowedOverlapM(pair, settings)) &&
      clearOfTunnelling(pair, h0, settings),
  );
  if (ownOk) {
    return {
      kind: "keep",
      summary: `Keep your settings: at ${formatLimit(n0)} substeps every pair stays within ω·h ≤ ${num(phase)}, within the overlap tolerance and clear of tunnelling.`,
      details: works(n0) ? [`One stiffness for every pair would also do from ${num(floor)} to ${num(capAt(n0).k)} ${unit}.`] : [],
      settings: null,
      impossiblePairs: [],
    };
  }
  if (works(n0)) {
    const cap = capAt(n0).k;
    return {
      kind: "stiffness",
      summary: `Set one stiffness between ${num(floor)} and ${num(cap)} ${unit} at your ${formatLimit(n0)} substeps; ${num(cap)} ${unit}, the stiffest, keeps overlaps shallowest.`,
      details: [
        `The floor: ${pairs[floorAt].name} needs at least ${num(floor)} ${unit} to stay within the overlap tolerance (${num(allowedOverlapM(pairs[floorAt], settings))} m at ${num(pairs[floorAt].closingSpeedMPerS)} m/s).`,
        `The cap: ${pairs[capAt(n0).at].name} keeps ω·h ≤ ${num(phase)} up to ${num(cap)} ${unit} with h = ${num(h0)} s.`,
      ],
      settings: { substeps: n0, stiffness: cap, stiffnessMin: floor, stiffnessMax: cap },
      impossiblePairs: [],
    };
  }
  let n = n0 + 1;
  while (n <= nMax && !works(n)) n++;
  if (n <= nMax) {
    const cap = capAt(n).k;
    const details = [why(n0), `At ${formatLimit(n)} substeps (h = ${num(settings.dtS / n)} s) the cap rises to ${num(cap)} ${unit}, above the floor of ${num(floor)} ${unit}, and every pair stays clear of tunnelling.`];
    if (settings.groupStiffness === undefined && found.substeps !== null && found.substeps > n0 && floor <= (settings.stiffness ?? 0)) {
      details.push(`Or keep your stiffness of ${num(settings.stiffness as number)} ${unit} and raise the substeps to ${formatLimit(found.substeps)}.`);
    }
    return {
      kind: "substeps",
      summary: `Raise the substeps from ${formatLimit(n0)} to ${formatLimit(n)} and set one stiffness between ${num(floor)} and ${num(cap)} ${unit}; ${num(cap)} ${unit} keeps overlaps shallowest.`,
      details,
      settings: { substeps: n, stiffness: cap, stiffnessMin: floor, stiffnessMax: cap },
      impossiblePairs: [],
    };
  }

  // No single stiffness at any substep count: which pairs cannot be helped at all at this frame rate?
  const hMin = settings.dtS / nMax;
  const impossible: (ImpossiblePair & { substepsPerS: number })[] = [];
  for (let p = 0; p < pairs.length; p++) {
    const pair = pairs[p];
    const cap = stiffnessAtOmega(pair, phase / hMin, model);
    const tunnels = !clearOfTunnelling(pair, hMin, settings);
    if (!tunnels && floors[p] <= cap) continue;
    const highest = highestFeasibleClosingSpeed(pair, floors[p], nMax, settings);
    // Substeps per second the pair needs: its contact frequency at its floor within the phase, and its travel per substep within the chord.
    const omegaNeeded = pairOmegaRadPerS({ ...pair, stiffness: floors[p] }, model);
    const chordM = (pair.a.radiusM + pair.b.radiusM) * Math.sqrt(1 - Math.max(...settings.offsets) ** 2);
    const substepsPerS = Math.max(omegaNeeded / phase, pair.closingSpeedMPerS / ((1 - settings.margin) * chordM));
    const reason = tunnels
      ? `even at ${formatLimit(nMax)} substeps (h = ${num(hMin)} s) it closes ${num(pair.closingSpeedMPerS * hMin)} m per substep at ${num(pair.closingSpeedMPerS)} m/s, more than the margin allows of its ${num(chordM)} m contact chord`
      : `at ${num(pair.closingSpeedMPerS)} m/s it needs at least ${num(floors[p])} ${unit} to stay within ${num(allowedOverlapM(pair, settings))} m of overlap, but even at ${formatLimit(nMax)} substeps (h = ${num(hMin)} s) the bound ω·h ≤ ${num(phase)} allows at most ${num(cap)} ${unit}`;
    impossible.push({
      pair: pair.name,
      reason: `${pair.name} cannot be made stable at ${num(frameHz)} Hz: ${reason}. It needs about ${num(substepsPerS)} substeps per second (${num(substepsPerS / nMax)} Hz at ${formatLimit(nMax)} substeps).`,
      highestClosingSpeedMPerS: highest,
      substepsPerS,
    });
  }
  if (impossible.length > 0) {
    // One change per object: each impossible pair slows its faster object (both, when the slower
    // alone closes too fast), and an object takes the lowest top speed any of its pairs asks for.
    // Lower speeds only lower the floors (k ∝ v²) and raise Hertz caps, so no other pair gets worse.
    const speedCap = new Map<string, { object: CatalogueObject; topSpeedMPerS: number }>();
    const ask = (object: CatalogueObject, speed: number) => {
      const current = speedCap.get(object.name);
      if (!current || speed < current.topSpeedMPerS) speedCap.set(object.name, { object, topSpeedMPerS: Math.max(0, speed) });
    };
    let needsFrameRate = false;
    for (const entry of impossible) {
      const pair = pairs.find((candidate) => candidate.name === entry.pair) as CataloguePair;
      const highest = entry.highestClosingSpeedMPerS;
      if (highest <= 0) {
        needsFrameRate = true;
        continue;
      }
      const [fast, slow] = pair.a.topSpeedMPerS >= pair.b.topSpeedMPerS ? [pair.a, pair.b] : [pair.b, pair.a];
      if (pair.a.name === pair.b.name) ask(pair.a, highest / 2);
      else if (highest - slow.topSpeedMPerS > 0) ask(fast, highest - slow.topSpeedMPerS);
      else {
        const factor = highest / pair.closingSpeedMPerS;
        ask(fast, fast.topSpeedMPerS * factor);
        ask(slow, slow.topSpeedMPerS * factor);
      }
    }
    const changes = [...speedCap.values()].map(({ object, topSpeedMPerS }) => `${object.name}: lower its top speed from ${num(object.topSpeedMPerS)} to at most ${num(topSpeedMPerS)} m/s`);
    const neededHz = Math.max(...impossible.map((entry) => entry.substepsPerS)) / nMax;
    const names = impossible.map((entry) => entry.pair);
    const frameRate = `run the physics at ${num(Math.ceil(neededHz))} Hz or more with ${formatLimit(nMax)} substeps`;
    return {
      kind: "objects",
      summary: `${names.length === 1 ? `${names[0]} cannot` : `${names.length} pairs (${names.slice(0, 3).join(", ")}${names.length > 3 ? ", …" : ""}) cannot`} be made stable at ${num(frameHz)} Hz with any stiffness or substep count. ${
        changes.length > 0 && !needsFrameRate ? `Change the catalogue (${changes.slice(0, 3).join("; ")}${changes.length > 3 ? "; …" : ""}) and check again, or ${frameRate}.` : `Enlarge the objects or ${frameRate}.`
      }`,
      details: [...impossible.map((entry) => entry.reason), ...changes.map((change) => `${change}.`)],
      settings: null,
      impossiblePairs: impossible.map(({ substepsPerS: _ignored, ...entry }) => (void _ignored, entry)),
    };
  }
  // Every pair can be helped alone, but not with one stiffness: per-group stiffness.
  let nGroups = n0;
  while (nGroups < nMax && pairs.some((pair, p) => !clearOfTunnelling(pair, settings.dtS / nGroups, settings) || floors[p] > stiffnessAtOmega(pair, (phase * nGroups) / settings.dtS, model))) nGroups++;
  const capPair = pairs[capAt(nMax).at];
  const floorPair = pairs[floorAt];
  const range = (pair: CataloguePair, p: number) => `${pair.name} from ${num(floors[p])} to ${num(stiffnessAtOmega(pair, (phase * nGroups) / settings.dtS, model))} ${unit}`;
  return {
    kind: "groups",
    summary: `No single stiffness fits every pair even at ${formatLimit(nMax)} substeps: put ${capPair.a.name === capPair.b.name ? capPair.a.name : `${capPair.a.name} and ${capPair.b.name}`} and ${floorPair.a.name === floorPair.b.name ? floorPair.a.name : `${floorPair.a.name} and ${floorPair.b.name}`} in different groups with their own stiffness, at ${formatLimit(nGroups)} substeps.`,
    details: [why(nMax), `At ${formatLimit(nGroups)} substeps each pair alone has a range: ${range(capPair, pairs.indexOf(capPair))}; ${range(floorPair, floorAt)}.`],
    settings: null,
    impossiblePairs: [],
  };
}

// ---------------------------------------------------------------------------
// The pair matrix

/** Verdicts from worst to best (the engine's precedence). */
export function verdictRank(verdict: Verdict): number {
  return VERDICT_PRECEDENCE.indexOf(verdict);
}

export interface PairSummary {
  name: string;
  i: number;
  j: number;
  a: string;
  b: string;
  closingSpeedMPerS: number;
  stiffness: number;
  /** Worst verdict over the pair's cells; null while none has finished. */
  worstVerdict: Verdict | null;
  /** Cells of the pair per verdict. */
  counts: Record<Verdict, number>;
  cellsDone: number;
  cells: number;
  /** Highest closing speed up to which every checked speed and offset is stable (m/s); 0 when the slowest is not. */
  highestStableSpeedMPerS: number | null;
  /** 1 − ω·h/2 at the pair's closing speed. */
  boundMargin: number;
  /** Worst cell of the pair (its index in the sweep), for opening it. */
  worstCellIndex: number | null;
}

export interface PairMatrix {
  objects: string[];
  pairs: PairSummary[];
  /** Pairs whose worst verdict is not stable, worst first. */
  atRisk: string[];
  /** The riskiest pair (worst verdict, then lowest stable speed), or null when every pair is stable. */
  riskiest: string | null;
  complete: boolean;
}

/**
 * Summarises a check's cells per pair. Cells carry axis values [pair, fraction, offset], as built
 * by checkSpec.
 */
export function pairMatrix(objects: readonly CatalogueObject[], settings: CheckSettings, cells: readonly CellResult[]): PairMatrix {
  const pairs = cataloguePairs(objects, settings);
  const fractions = speedFractions(settings);
  const substepS = settings.dtS / settings.substeps;
  const perPair = fractions.length * settings.offsets.length;
  const byName = new Map<string, CellResult[]>();
  for (const cell of cells) {
    const name = String(cell.axisValues[0]);
    let list = byName.get(name);
    if (!list) byName.set(name, (list = []));
    list.push(cell);
  }
  const summaries: PairSummary[] = pairs.map((pair) => {
    const list = byName.get(pair.name) ?? [];
    const counts = Object.fromEntries(VERDICTS.map((verdict) => [verdict, 0])) as Record<Verdict, number>;
    let worst: CellResult | null = null;
    for (const cell of list) {
      counts[cell.verdict] += 1;
      if (!worst || verdictRank(cell.verdict) < verdictRank(worst.verdict)) worst = cell;
    }
    let highest: number | null = null;
    if (list.length === perPair) {
      highest = 0;
      for (const fraction of fractions) {
        const atSpeed = list.filter((cell) => cell.axisValues[1] === fraction);
        if (atSpeed.length === 0 || atSpeed.some((cell) => cell.verdict !== "stable")) break;
        highest = fraction * pair.closingSpeedMPerS;
      }
    }
    return {
      name: pair.name,
      i: pair.i,
      j: pair.j,
      a: pair.a.name,
      b: pair.b.name,
      closingSpeedMPerS: pair.closingSpeedMPerS,
      stiffness: pair.stiffness,
      worstVerdict: worst?.verdict ?? null,
      counts,
      cellsDone: list.length,
      cells: perPair,
      highestStableSpeedMPerS: highest,
      boundMargin: boundMargin(pairOmegaRadPerS(pair, settings.contactModel), substepS),
      worstCellIndex: worst?.index ?? null,
    };
  });
  const risky = summaries
    .filter((pair) => pair.worstVerdict !== null && pair.worstVerdict !== "stable")
    .sort((x, y) => verdictRank(x.worstVerdict as Verdict) - verdictRank(y.worstVerdict as Verdict) || (x.highestStableSpeedMPerS ?? 0) / x.closingSpeedMPerS - (y.highestStableSpeedMPerS ?? 0) / y.closingSpeedMPerS || x.boundMargin - y.boundMargin);
  return {
    objects: objects.map((object) => object.name),
    pairs: summaries,
    atRisk: risky.map((pair) => pair.name),
    riskiest: risky[0]?.name ?? null,
    complete: summaries.every((pair) => pair.cellsDone === pair.cells),
  };
}


