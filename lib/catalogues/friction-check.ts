/**
 * The friction part of a catalogue check, for catalogues whose objects give a friction coefficient
 * μ (and optionally a rolling resistance μ_r). Analytic, like the recommendation, beside the check's
 * simulated pair cells (which carry each pair's μ and μ_r on the scene.pair axis, lib/catalogues/
 * check.ts checkSpec, so the matrix shows the same failures in simulation). The rows come from
 * closed-form bounds, each with its source:
 *
 * - tangential stability of every frictional pair and of every object on the floor: the sticking
 *   tangential spring k_t = ratio·k against the effective tangential mass m_t = m/(1 + m·r²/I)
 *   (lib/physics/friction-analytic.ts), judged by ω_t·h ≤ 2(1 − margin), the margin'd form of the
 *   symplectic Euler bound ω·h < 2 (Hairer, Lubich & Wanner 2006, the harmonic oscillator);
 * - resting overlap: the static overlap under the weight, m·g/k (linear) or (m·g/k_H)^(2/3) (Hertz),
 *   against the overlap tolerance (the heavier object resting on the lighter for a pair);
 * - sliding, on the floor and on the game's steepest slope where one is given: the angle above which
 *   an object that cannot roll slides (tan θ = μ) and above which a rolling disc slips (tan θ = 3μ),
 *   and how long an object launched at its top speed without spin slides before it rolls
 *   (Kleppner & Kolenkow, An Introduction to Mechanics, 2nd ed. 2014, ch. 2 and 7);
 * - with μ_r, how far the rolling object goes before rolling resistance stops it.
 *
 * A catalogue with neither μ nor μ_r on any object has no friction part: its check (spec, matrix,
 * recommendation, exports) is exactly what it was before friction existed.
 *
 * Pure: safe to import in the browser.
 */
import { DEFAULT_TANGENTIAL_STIFFNESS_RATIO } from "../physics/constants";
import {
  pairTangentialEffectiveMassKg,
  SOLID_DISC_INERTIA_FACTOR,
  slideToRoll,
  slidingAngleDeg,
  staticOverlapM,
  tangentialEffectiveMassKg,
  tangentialOmegaH,
} from "../physics/friction-analytic";
import { formatLimit, SPEC_LIMITS } from "../sweeps/parameters";
import type { CatalogueObject } from "./format";
import type { CheckSettings } from "./check";
import { allowedPhase, cataloguePairs, pairOmegaRadPerS, type CataloguePair } from "./pairs";

/** Gravity a check assumes when its settings give none (m/s², standard gravity rounded as games use it). */
export const CHECK_DEFAULT_GRAVITY_M_PER_S2 = 9.81;

/** Does any object of the catalogue give friction or rolling resistance? */
export function catalogueHasFriction(objects: readonly CatalogueObject[]): boolean {
  return objects.some((object) => (object.friction ?? null) !== null || (object.rollingResistance ?? null) !== null);
}

/**
 * A pair's friction coefficient: the geometric mean √(μ_A·μ_B) when both objects give one (common
 * practice in game engines' friction mixing), the one given when only one does, null when neither.
 */
export function pairFrictionCoefficient(a: CatalogueObject, b: CatalogueObject): number | null {
  const muA = a.friction ?? null;
  const muB = b.friction ?? null;
  if (muA !== null && muB !== null) return a === b || muA === muB ? muA : Math.sqrt(muA * muB);
  return muA ?? muB;
}

/** A pair's rolling resistance: the larger of the two given (the softer-rolling surface decides nothing; ours). */
export function pairRollingResistance(a: CatalogueObject, b: CatalogueObject): number | null {
  const values = [a.rollingResistance ?? null, b.rollingResistance ?? null].filter((value): value is number => value !== null);
  return values.length === 0 ? null : Math.max(...values);
}

export interface FrictionContactRow {
  /** "crate × coin" for a pair (the pair matrix's name), "crate on the floor" for an object on the floor. */
  contact: string;
  kind: "pair" | "floor";
  objectA: string;
  /** The other object of a pair; null for the floor. */
  objectB: string | null;
  /** μ of the contact (see pairFrictionCoefficient); null when only rolling resistance is given. */
  frictionCoefficient: number | null;
  rollingResistance: number | null;
  /** Normal stiffness of the contact: the pair's, or the object's own on the floor (N/m, N/m^1.5 Hertz). */
  stiffness: number;
  /** The normal spring's stiffness at the check's linearisation (N/m): k, or (3/2)·k_H·√δ_max for Hertz. */
  normalStiffnessNPerM: number;
  /** k_t = ratio · normal stiffness (N/m). */
  tangentialStiffnessNPerM: number;
  /** m/(1 + m·r²/I) of the object, or 1/(1/m_tA + 1/m_tB) of a pair (kg). */
  tangentialMassKg: number;
  /** ω_t·h at the game's substep. */
  tangentialOmegaH: number;
  /** Within ω_t·h ≤ 2(1 − margin)? */
  tangentialStable: boolean;
  /** Largest k_t/k that keeps this contact within ω_t·h ≤ 2(1 − margin) at the game's substeps. */
  largestStiffnessRatio: number;
  /** Static overlap under the weight (m): the object on the floor, the heavier object on the lighter for a pair. */
  restingOverlapM: number;
  /** Deepest resting overlap the tolerance allows (m): the tolerance times the (smaller) radius. */
  allowedRestingOverlapM: number;
  restingWithinTolerance: boolean;
  /** Floor rows with μ: above this slope angle an object that cannot roll slides (tan θ = μ), in degrees. */
  slidingAngleDeg: number | null;
  /** Floor rows with μ: above this slope angle a rolling solid disc slips (tan θ = 3μ), in degrees. */
  rollingSlipAngleDeg: number | null;
  /** Floor rows with μ and a slope in the settings: does the object hold still on it when it cannot roll? */
  holdsOnSlope: boolean | null;
  /** Floor rows with μ: launched at its top speed without spin, it slides for this long before rolling (s). */
  slideTimeS: number | null;
  /** …over this distance (m). */
  slideDistanceM: number | null;
  /** …and then rolls at this speed (m/s). */
  rollingSpeedMPerS: number | null;
  /** Floor rows with μ and μ_r: the distance it then rolls before rolling resistance stops it (m). */
  rollingDistanceM: number | null;
}

export interface FrictionCheck {
  /** The k_t/k the rows are judged at: the settings' frictionStiffnessRatio, or the engine's default 2/7. */
  stiffnessRatio: number;
  stiffnessRatioGiven: boolean;
  gravityMPerS2: number;
  /** The game's steepest slope (degrees), when the settings give one. */
  slopeAngleDeg: number | null;
  contacts: FrictionContactRow[];
  /** Largest k_t/k that keeps every frictional contact within the margin at the game's substeps, and the contact that decides it. */
  largestStiffnessRatio: number | null;
  largestStiffnessRatioContact: string | null;
  /** Smallest substep count keeping every tangential spring within the margin at `stiffnessRatio`; null past the spec's limit. */
  tangentialSubsteps: number | null;
  /** Smallest substep count keeping every pair stable: the larger of tangentialSubsteps and the normal recommendation's substeps. */
  substeps: number | null;
  /** Contacts whose tangential spring is past the margin at the game's settings. */
  unstableContacts: string[];
  /** Contacts resting deeper than the tolerance. */
  sinkingContacts: string[];
  /** One sentence: what to do. */
  summary: string;
  /** The numbers behind it, one sentence each. */
  details: string[];
}

function num(value: number, digits = 3): string {
  return Number(value.toPrecision(digits)).toLocaleString("en-US", { maximumSignificantDigits: digits });
}

/**
 * The normal stiffness a contact's tangential spring is a ratio of, in N/m: k for the linear model;
 * for Hertz the slope (3/2)·k_H·√δ_max at the deepest overlap of a hit at the closing speed, the
 * same linearisation the check's normal bound uses (pairOmegaRadPerS: k_eff = ω²·m*).
 */
function normalStiffnessNPerM(contact: Pick<CataloguePair, "stiffness" | "reducedMassKg" | "closingSpeedMPerS">, model: CheckSettings["contactModel"]): number {
  if (model === "linear") return contact.stiffness;
  const omega = pairOmegaRadPerS(contact, model);
  return omega * omega * contact.reducedMassKg;
}

/** Smallest substep count n ≤ the spec's limit with ω·dt/n ≤ phase for every ω, or null. */
function smallestSubsteps(omegas: readonly number[], dtS: number, phase: number): number | null {
  for (let n = 1; n <= SPEC_LIMITS.maxSubsteps; n++) {
    if (omegas.every((omega) => omega * (dtS / n) <= phase)) return n;
  }
  return null;
}

/**
 * The friction part of a check, or null when no object gives μ or μ_r (see the module comment).
 * `normalSubsteps` is the normal recommendation's substep count (recommend()), null when none.
 */
export function frictionCheck(objects: readonly CatalogueObject[], settings: CheckSettings, normalSubsteps: number | null): FrictionCheck | null {
  if (!catalogueHasFriction(objects)) return null;
  const model = settings.contactModel;
  const ratio = settings.frictionStiffnessRatio ?? DEFAULT_TANGENTIAL_STIFFNESS_RATIO;
  const gravity = settings.gravityMPerS2 ?? CHECK_DEFAULT_GRAVITY_M_PER_S2;
  const slope = settings.slopeAngleDeg ?? null;
  const phase = allowedPhase(settings.margin);
  const substepS = settings.dtS / settings.substeps;
  const tolerance = settings.tolerances.maxOverlapFraction;
  const kappa = SOLID_DISC_INERTIA_FACTOR;
  const pairs = cataloguePairs(objects, settings);
  const rows: FrictionContactRow[] = [];

  const row = (input: {
    contact: string;
    kind: FrictionContactRow["kind"];
    a: CatalogueObject;
    b: CatalogueObject | null;
    mu: number | null;
    muR: number | null;
    stiffness: number;
    normalMassKg: number;
    closingSpeedMPerS: number;
    tangentialMassKg: number;
    restingMassKg: number;
    radiusM: number;
  }): FrictionContactRow => {
    const kn = normalStiffnessNPerM({ stiffness: input.stiffness, reducedMassKg: input.normalMassKg, closingSpeedMPerS: input.closingSpeedMPerS }, model);
    const kt = ratio * kn;
    const omegaH = tangentialOmegaH(kt, input.tangentialMassKg, substepS);
    const restingOverlapM = gravity > 0 ? staticOverlapM(input.restingMassKg, gravity, input.stiffness, model) : 0;
    const allowedRestingOverlapM = tolerance * input.radiusM;
    const floor = input.kind === "floor" && input.mu !== null && input.mu > 0 && gravity > 0;
    const launch = floor ? slideToRoll(input.a.topSpeedMPerS, 0, input.mu as number, gravity, kappa) : null;
    // Distance while sliding: uniform deceleration μ·g from the top speed down to the rolling speed.
    const slideDistanceM = launch ? ((input.a.topSpeedMPerS + launch.rollingSpeedMPerS) / 2) * launch.timeS : null;
    // Rolling without slip against the torque μ_r·r·F_n: m·a = F, I·α = −F·r − μ_r·r·m·g, a = α·r
    // give a = −μ_r·g/(1 + κ) (Newton–Euler for a disc; torque of Ai, Chen, Rotter & Ooi 2011, model A).
    const rollingDistanceM = launch && input.muR !== null && input.muR > 0 ? (launch.rollingSpeedMPerS ** 2 * (1 + kappa)) / (2 * input.muR * gravity) : null;
    return {
      contact: input.contact,
      kind: input.kind,
      objectA: input.a.name,
      objectB: input.b?.name ?? null,
      frictionCoefficient: input.mu,
      rollingResistance: input.muR,
      stiffness: input.stiffness,
      normalStiffnessNPerM: kn,
      tangentialStiffnessNPerM: kt,
      tangentialMassKg: input.tangentialMassKg,
      tangentialOmegaH: omegaH,
      // The same arithmetic and rounding allowance as the normal advice (adviseCheck's `within`).
      tangentialStable: omegaH <= phase * (1 + 1e-9),
      largestStiffnessRatio: (input.tangentialMassKg * (phase / substepS) ** 2) / kn,
      restingOverlapM,
      allowedRestingOverlapM,
      restingWithinTolerance: restingOverlapM <= allowedRestingOverlapM,
      slidingAngleDeg: floor ? slidingAngleDeg(input.mu as number) : null,
      rollingSlipAngleDeg: floor ? slidingAngleDeg(input.mu as number, kappa) : null,
      holdsOnSlope: floor && slope !== null ? Math.tan((slope * Math.PI) / 180) <= (input.mu as number) : null,
      slideTimeS: launch?.timeS ?? null,
      slideDistanceM,
      rollingSpeedMPerS: launch?.rollingSpeedMPerS ?? null,
      rollingDistanceM,
    };
  };

  for (const pair of pairs) {
    const mu = pairFrictionCoefficient(pair.a, pair.b);
    const muR = pairRollingResistance(pair.a, pair.b);
    if (mu === null && muR === null) continue;
    rows.push(
      row({
        contact: pair.name,
        kind: "pair",
        a: pair.a,
        b: pair.b,
        mu,
        muR,
        stiffness: pair.stiffness,
        normalMassKg: pair.reducedMassKg,
        closingSpeedMPerS: pair.closingSpeedMPerS,
        tangentialMassKg: pairTangentialEffectiveMassKg(pair.a.massKg, pair.b.massKg),
        restingMassKg: Math.max(pair.a.massKg, pair.b.massKg),
        radiusM: Math.min(pair.a.radiusM, pair.b.radiusM),
      }),
    );
  }
  // Objects on the floor: a static floor at the object's own stiffness (its pair with itself).
  for (const pair of pairs) {
    if (pair.i !== pair.j) continue;
    const object = pair.a;
    const mu = object.friction ?? null;
    const muR = object.rollingResistance ?? null;
    if (mu === null && muR === null) continue;
    rows.push(
      row({
        contact: `${object.name} on the floor`,
        kind: "floor",
        a: object,
        b: null,
        mu,
        muR,
        stiffness: pair.stiffness,
        normalMassKg: object.massKg,
        closingSpeedMPerS: object.topSpeedMPerS,
        tangentialMassKg: tangentialEffectiveMassKg(object.massKg),
        restingMassKg: object.massKg,
        radiusM: object.radiusM,
      }),
    );
  }

  // Only contacts with a friction coefficient have a tangential spring.
  const springs = rows.filter((contact) => contact.frictionCoefficient !== null && contact.frictionCoefficient > 0);
  let decider: FrictionContactRow | null = null;
  for (const contact of springs) if (!decider || contact.largestStiffnessRatio < decider.largestStiffnessRatio) decider = contact;
  const tangentialSubsteps = smallestSubsteps(
    springs.map((contact) => Math.sqrt(contact.tangentialStiffnessNPerM / contact.tangentialMassKg)),
    settings.dtS,
    phase,
  );
  const substeps = tangentialSubsteps !== null && normalSubsteps !== null ? Math.max(tangentialSubsteps, normalSubsteps) : null;
  const unstable = springs.filter((contact) => !contact.tangentialStable).map((contact) => contact.contact);
  const sinking = rows.filter((contact) => !contact.restingWithinTolerance).map((contact) => contact.contact);

  const ratioText = `k_t/k = ${num(ratio)}${settings.frictionStiffnessRatio === undefined ? " (the default, 2/7)" : ""}`;
  const n0 = settings.substeps;
  let summary: string;
  if (springs.length === 0) {
    summary = "No object gives a friction coefficient, so no contact has a tangential spring; only resting overlap and rolling resistance are checked.";
  } else if (unstable.length === 0) {
    summary = `Keep ${ratioText} at ${formatLimit(n0)} substeps: every frictional contact stays within ω_t·h ≤ ${num(phase)}; k_t/k may go up to ${num((decider as FrictionContactRow).largestStiffnessRatio)} (${(decider as FrictionContactRow).contact} decides).`;
  } else if (tangentialSubsteps === null) {
    summary = `At ${ratioText} no substep count up to ${formatLimit(SPEC_LIMITS.maxSubsteps)} keeps every tangential spring stable: lower k_t/k to at most ${num((decider as FrictionContactRow).largestStiffnessRatio)} at ${formatLimit(n0)} substeps.`;
  } else {
    const decides = decider as FrictionContactRow;
    summary = `At ${ratioText} the tangential spring of ${unstable.length === 1 ? unstable[0] : `${unstable.length} contacts`} is past ω_t·h ≤ ${num(phase)}: lower k_t/k to at most ${num(decides.largestStiffnessRatio)} (${decides.contact} decides), or raise the substeps to ${formatLimit(substeps ?? tangentialSubsteps)}.`;
  }
  const details: string[] = [];
  if (decider) {
    details.push(
      `${decider.contact}: tangential mass ${num(decider.tangentialMassKg)} kg against k_t = ${num(decider.tangentialStiffnessNPerM)} N/m gives ω_t·h = ${num(decider.tangentialOmegaH)} at h = ${num(substepS)} s; ω_t·h ≤ ${num(phase)} holds up to k_t/k = ${num(decider.largestStiffnessRatio)}.`,
    );
  }
  if (tangentialSubsteps !== null && springs.length > 0) {
    details.push(
      substeps !== null
        ? `At ${ratioText}, ${formatLimit(substeps)} substeps keep every pair stable: ${formatLimit(tangentialSubsteps)} for the tangential springs, ${formatLimit(normalSubsteps as number)} for the normal ones.`
        : `At ${ratioText}, ${formatLimit(tangentialSubsteps)} substeps keep every tangential spring stable; the normal springs need the advice above.`,
    );
  }
  if (sinking.length > 0) {
    const worst = rows.reduce((a, b) => (b.restingOverlapM / b.allowedRestingOverlapM > a.restingOverlapM / a.allowedRestingOverlapM ? b : a));
    details.push(
      `${sinking.length === 1 ? sinking[0] : `${sinking.length} contacts`} rest deeper than the overlap tolerance: ${worst.contact} sinks ${num(worst.restingOverlapM)} m under its weight (m·g/k), the tolerance allows ${num(worst.allowedRestingOverlapM)} m; a stiffer contact holds it shallower.`,
    );
  } else if (gravity > 0) {
    details.push(`Every contact rests within the overlap tolerance under gravity ${num(gravity)} m/s² (m·g/k).`);
  }
  if (slope !== null) {
    const sliding = rows.filter((contact) => contact.holdsOnSlope === false).map((contact) => contact.objectA);
    details.push(
      sliding.length === 0
        ? `Every object with friction holds still on your ${num(slope)}° slope (tan θ ≤ μ).`
        : `On your ${num(slope)}° slope ${sliding.join(", ")} slide${sliding.length === 1 ? "s" : ""} (tan θ > μ); ${sliding.length === 1 ? "it needs" : "they need"} μ ≥ ${num(Math.tan((slope * Math.PI) / 180))} to hold.`,
    );
  }
  return {
    stiffnessRatio: ratio,
    stiffnessRatioGiven: settings.frictionStiffnessRatio !== undefined,
    gravityMPerS2: gravity,
    slopeAngleDeg: slope,
    contacts: rows,
    largestStiffnessRatio: decider?.largestStiffnessRatio ?? null,
    largestStiffnessRatioContact: decider?.contact ?? null,
    tangentialSubsteps: springs.length > 0 ? tangentialSubsteps : null,
    substeps: springs.length > 0 ? substeps : null,
    unstableContacts: unstable,
    sinkingContacts: sinking,
    summary,
    details,
  };
}
