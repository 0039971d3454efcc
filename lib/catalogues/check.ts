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
  reducedMassKg,
} from "../physics/analytic";
import { linearDampingRatioForRestitution } from "../physics/damping";
import { DEFAULT_TOLERANCES } from "../physics/constants";
import { VERDICT_PRECEDENCE, VERDICTS, type Verdict } from "../physics/types";
import { formatLimit, numericRule, rangeViolation, SPEC_LIMITS } from "../sweeps/parameters";
import type { CellResult } from "../sweeps/results";
import type { AxisPair, SweepSpecInput } from "../sweeps/spec";
import type { CatalogueObject } from "./format";

// ---------------------------------------------------------------------------
// Settings

function ruled(path: string) {
  const rule = numericRule(path, "pair");
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
  /** Share of the stability bound kept in reserve: recommendations keep ω·h ≤ 2·(1 − margin). */
  margin: z.number({ error: "margin must be a number" }).min(0, { error: "margin must be ≥ 0" }).max(CHECK_LIMITS.maxMargin, { error: `margin must be ≤ ${CHECK_LIMITS.maxMargin}` }).default(0.8),
});

export type CheckSettingsInput = z.input<typeof checkSettingsSchema>;
export type CheckSettings = z.output<typeof checkSettingsSchema>;

export class CheckInputError extends Error {
  constructor(
    readonly field: string,
    message: string,
  ) {
    super(message);
    this.name = "CheckInputError";
  }
}

// ---------------------------------------------------------------------------
// Pairs

export interface CataloguePair {
  /** "crate × coin": the scene.pair value of its cells. */
  name: string;
  a: CatalogueObject;
  b: CatalogueObject;
  /** Indices of a and b in the catalogue. */
  i: number;
  j: number;
  reducedMassKg: number;
  closingSpeedMPerS: number;
  stiffness: number;
  restitution: number;
}

export function pairName(a: CatalogueObject, b: CatalogueObject): string {
  return `${a.name} × ${b.name}`;
}

/** The stiffness of one object under the settings; throws when neither a group nor a single stiffness gives one. */
function objectStiffness(object: CatalogueObject, settings: CheckSettings): number {
  // Own properties only: a group named "constructor" or "toString" must not read Object.prototype.
  const groups = settings.groupStiffness;
  const fromGroup = object.group !== null && groups !== undefined && Object.hasOwn(groups, object.group) ? groups[object.group] : undefined;
  const value = fromGroup ?? settings.stiffness;
  if (value === undefined) {
    throw new CheckInputError(
      object.group !== null ? `groupStiffness.${object.group}` : "stiffness",
      object.group !== null ? `no stiffness for group "${object.group}" (object "${object.name}"): add it to groupStiffness or give stiffness` : `object "${object.name}" has no group: give stiffness for objects without one`,
    );
  }
  return value;
}

/** Every unordered pair of objects, each object with itself included, in catalogue order (i ≤ j). */
export function cataloguePairs(objects: readonly CatalogueObject[], settings: CheckSettings): CataloguePair[] {
  if (settings.stiffness === undefined && settings.groupStiffness === undefined) throw new CheckInputError("stiffness", "give stiffness, or groupStiffness for every group");
  const stiffness = objects.map((object) => objectStiffness(object, settings));
  const pairs: CataloguePair[] = [];
  for (let i = 0; i < objects.length; i++) {
    for (let j = i; j < objects.length; j++) {
      const a = objects[i];
      const b = objects[j];
      const ka = stiffness[i];
      const kb = stiffness[j];
      pairs.push({
        name: pairName(a, b),
        a,
        b,
        i,
        j,
        reducedMassKg: reducedMassKg(a.massKg, b.massKg),
        closingSpeedMPerS: a.topSpeedMPerS + b.topSpeedMPerS,
        // Harmonic mean: two springs in series, scaled so that a group meeting itself keeps its own stiffness.
        stiffness: ka === kb ? ka : (2 * ka * kb) / (ka + kb),
        restitution: Math.min(a.restitution, b.restitution),
      });
    }
  }
  return pairs;
}

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

/** Phase per substep the recommendations allow: ω·h ≤ 2·(1 − margin). */
export function allowedPhase(margin: number): number {
  return 2 * (1 - margin);
}

/**
 * Angular frequency of a pair's contact: linear √(k/m*); Hertz linearised at the deepest overlap of
 * a hit at the pair's closing speed, k_eff = dF/dδ = (3/2)·k_H·√δ_max.
 */
export function pairOmegaRadPerS(pair: Pick<CataloguePair, "stiffness" | "reducedMassKg" | "closingSpeedMPerS">, contactModel: CheckSettings["contactModel"]): number {
  if (contactModel === "linear") return linearAngularFrequencyRadPerS(pair.stiffness, pair.reducedMassKg);
  const overlapM = hertzMaxOverlapM(pair.stiffness, pair.reducedMassKg, pair.closingSpeedMPerS);
  return Math.sqrt((1.5 * pair.stiffness * Math.sqrt(overlapM)) / pair.reducedMassKg);
}

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
  /** Largest single stiffness with ω·h ≤ 2(1 − margin) for every pair at the game's substeps (linear model), or null. */
  stiffness: number | null;
  /** Why there is no stiffness recommendation, when there is none. */
  stiffnessNote: string;
  /** Smallest substep count that keeps every pair within the margin at the game's stiffness, or null. */
  substeps: number | null;
  substepsNote: string;
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
  if (result.substeps === null) result.substepsNote = `No substep count up to ${formatLimit(SPEC_LIMITS.maxSubsteps)} keeps every pair within the margin at this stiffness.`;
  return result;
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


