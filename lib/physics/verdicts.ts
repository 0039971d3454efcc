/**
 * The verdict of a run and its one-line reason, by the verdict rules its scenario names
 * (docs/sweep-spec.md "Verdict rules"). Reads the run's metrics only: no state, no stepping.
 */
import type { Metrics, Scenario, Verdict } from "./types";
import { DEFAULT_TOLERANCES, STEP_STABILITY_LIMIT_OMEGA_H } from "./constants";
import { slopeShouldHold } from "./rest-metrics";
import { TUNNEL_CENTRES_CROSSED, TUNNEL_ENTERED_PAST_CLOSEST_APPROACH, TUNNEL_SKIPPED_CONTACT } from "./contact-field";

/** A verdict and the sentence that explains it (stored with the cell). */
export interface Judgement {
  verdict: Verdict;
  reason: string;
}

/** What `judge` needs beyond the metrics to explain a verdict. */
export interface VerdictContext {
  explodedAtS: number;
  energy: number;
  startEnergy: number;
  tunnelAtS: number;
  tunnelKind: number;
  tunnelBodyA: number;
  tunnelBodyB: number;
  expectedRestitution: number | null;
  /** Integrator step h (s); verdict rules 2 count a contact's steps as its duration / h. */
  stepS?: number;
}

/** The verdict of a run by the rules its scenario names (`verdictRules`, absent: 1). */
export function judge(metrics: Metrics, scenario: Scenario, context: VerdictContext): Judgement {
  return (scenario.verdictRules ?? 1) >= 2 ? judgeByRules2(metrics, scenario, context) : judgeByRules1(metrics, scenario, context);
}

/**
 * Verdict rules 1 (kept unchanged so re-run chunks of sweeps stored before versioning get the
 * verdicts their other cells have). Precedence exploded → tunneled → deep-overlap → energy-drift → stable.
 * Energy-drift: the run ends with more energy than it started with by more than energyDriftRel;
 * for undamped contacts also with less (nothing should dissipate); and for any first contact whose
 * measured restitution exceeds the model's target by more than energyDriftRel. Excursions during a
 * contact (bounded for the symplectic integrators) count only through maxEnergyErrorRel, which is
 * reported but does not decide the verdict unless it reaches the blow-up factor. The restitution
 * check applies to the pair and wall scenes, whose first contact is an isolated binary impact.
 */
function judgeByRules1(metrics: Metrics, scenario: Scenario, context: VerdictContext): Judgement {
  const tolerances = scenario.tolerances;
  if (metrics.exploded) {
    const reason = Number.isFinite(context.energy)
      ? `energy grew ×${formatNumber(context.energy / context.startEnergy)} by t = ${formatNumber(context.explodedAtS)} s (blow-up at ×${formatNumber(tolerances.blowUpEnergyFactor)})`
      : `state became non-finite at t = ${formatNumber(context.explodedAtS)} s`;
    return { verdict: "exploded", reason };
  }
  if (metrics.tunneled) {
    return { verdict: "tunneled", reason: `${describeTunnel(context)} at t = ${formatNumber(context.tunnelAtS)} s` };
  }
  if (metrics.maxOverlapFraction > tolerances.maxOverlapFraction) {
    return {
      verdict: "deep-overlap",
      reason: `overlap reached ${formatPercent(metrics.maxOverlapFraction)} of the smaller radius (limit ${formatPercent(tolerances.maxOverlapFraction)})`,
    };
  }
  const undamped = isUndamped(scenario);
  if (metrics.energyErrorRel > tolerances.energyDriftRel) {
    return { verdict: "energy-drift", reason: `energy rose ${formatPercent(metrics.energyErrorRel)} over the run (limit ${formatPercent(tolerances.energyDriftRel)})` };
  }
  if (undamped && metrics.energyErrorRel < -tolerances.energyDriftRel) {
    return { verdict: "energy-drift", reason: `energy fell ${formatPercent(-metrics.energyErrorRel)} without damping (limit ${formatPercent(tolerances.energyDriftRel)})` };
  }
  // Only an isolated binary contact (pair, wall) has a model restitution to compare with; in a row
  // or a box the first contact shares its bodies with neighbours.
  const isolatedContact = scenario.scene.kind === "pair" || scenario.scene.kind === "wall";
  if (isolatedContact && metrics.effectiveRestitution !== null && context.expectedRestitution !== null && metrics.effectiveRestitution > context.expectedRestitution + tolerances.energyDriftRel) {
    return {
      verdict: "energy-drift",
      reason: `restitution ${formatNumber(metrics.effectiveRestitution)} exceeds the model's ${formatNumber(context.expectedRestitution)} by more than ${formatNumber(tolerances.energyDriftRel)}`,
    };
  }
  const contactNote = metrics.contactSteps > 0 ? `, overlap up to ${formatPercent(metrics.maxOverlapFraction)} of the smaller radius` : ", no contact";
  return { verdict: "stable", reason: `energy changed ${formatSignedPercent(metrics.energyErrorRel)}${contactNote}` };
}

/**
 * Verdict rules 2 (docs/sweep-spec.md "Verdict rules"). Precedence:
 *  exploded        non-finite state, or energy above blowUpEnergyFactor × start (the run stopped);
 *  step-unstable   a contact was integrated at ω·h ≥ 2, the symplectic integrators' stability bound,
 *                  or an isolated contact (pair, wall) rebounded faster than amplificationLimit × the
 *                  model's restitution: the integrator, not the model, decided the bounce;
 *  tunneled, deep-overlap   as in rules 1;
 *  restitution-off an isolated contact's rebound off the model's restitution by more than
 *                  restitutionRel, relative, either way;
 *  energy-drift    the scene ended with more energy than it started with (by energyDriftRel), or
 *                  without damping with less;
 *  coarse-contact  the first contact took fewer than minStepsPerContact steps, or the energy inside
 *                  a contact peaked more than energyPeakRel above the start;
 *  stable.
 */
function judgeByRules2(metrics: Metrics, scenario: Scenario, context: VerdictContext): Judgement {
  const tolerances = scenario.tolerances;
  const amplificationLimit = tolerances.amplificationLimit ?? DEFAULT_TOLERANCES.amplificationLimit;
  const restitutionRel = tolerances.restitutionRel ?? DEFAULT_TOLERANCES.restitutionRel;
  const energyPeakRel = tolerances.energyPeakRel ?? DEFAULT_TOLERANCES.energyPeakRel;
  const minStepsPerContact = tolerances.minStepsPerContact ?? DEFAULT_TOLERANCES.minStepsPerContact;
  if (metrics.exploded) return judgeByRules1(metrics, scenario, context);
  const isolatedContact = scenario.scene.kind === "pair" || scenario.scene.kind === "wall";
  const omegaH = metrics.maxOmegaH;
  if (omegaH !== null && omegaH >= STEP_STABILITY_LIMIT_OMEGA_H) {
    return { verdict: "step-unstable", reason: `a contact ran at ω·h = ${formatNumber(omegaH)}, at or past the stability bound ${STEP_STABILITY_LIMIT_OMEGA_H}${amplificationNote(metrics)}` };
  }
  const amplification = metrics.amplification;
  if (isolatedContact && amplification !== null && amplification > amplificationLimit) {
    return {
      verdict: "step-unstable",
      reason: `the contact sent the bodies apart ${formatNumber(amplification)}× as fast as the model's restitution (limit ${formatNumber(amplificationLimit)}×) at ω·h = ${formatNumber(omegaH ?? 0)}`,
    };
  }
  const tangentialOmegaH = metrics.maxTangentialOmegaH ?? null;
  if (tangentialOmegaH !== null && tangentialOmegaH >= STEP_STABILITY_LIMIT_OMEGA_H) {
    return { verdict: "step-unstable", reason: `a tangential (friction) spring ran at ω_t·h = ${formatNumber(tangentialOmegaH)}, at or past the stability bound ${STEP_STABILITY_LIMIT_OMEGA_H}` };
  }
  if (metrics.tunneled) return judgeByRules1(metrics, scenario, context);
  if (metrics.maxOverlapFraction > tolerances.maxOverlapFraction) return judgeByRules1(metrics, scenario, context);
  const scene = scenario.scene;
  const resting = scene.kind === "slope" || scene.kind === "stack";
  const restingOverlapLimit = tolerances.restingOverlapFraction ?? DEFAULT_TOLERANCES.restingOverlapFraction;
  if (resting && metrics.restingOverlapFraction !== undefined && metrics.restingOverlapFraction > restingOverlapLimit) {
    return { verdict: "sinking", reason: `a resting body ended ${formatPercent(metrics.restingOverlapFraction)} of its radius deep in its support (limit ${formatPercent(restingOverlapLimit)})` };
  }
  if (isolatedContact && amplification !== null && Math.abs(amplification - 1) > restitutionRel) {
    return {
      verdict: "restitution-off",
      reason: `restitution ${formatNumber(metrics.effectiveRestitution ?? 0)} is ${formatSignedPercent(amplification - 1)} off the model's ${formatNumber(context.expectedRestitution ?? 0)} (limit ±${formatPercent(restitutionRel)})`,
    };
  }
  // An isolated contact that ended has its energy change judged through its restitution (the
  // scene's energy is what the contact returned); the scene energy rule is for everything else.
  const judgedByRestitution = isolatedContact && amplification !== null;
  const undamped = isUndamped(scenario);
  if (!judgedByRestitution && metrics.energyErrorRel > tolerances.energyDriftRel) {
    return { verdict: "energy-drift", reason: `the scene gained ${formatPercent(metrics.energyErrorRel)} energy over the run (limit ${formatPercent(tolerances.energyDriftRel)})` };
  }
  // Friction dissipates energy by sliding: a loss is the model's, not the integrator's.
  const frictional = (scenario.contact.friction?.coefficient ?? 0) > 0 || (scenario.contact.friction?.staticCoefficient ?? 0) > 0 || (scenario.contact.rollingResistance ?? 0) > 0;
  if (!judgedByRestitution && undamped && !frictional && metrics.energyErrorRel < -tolerances.energyDriftRel) {
    return { verdict: "energy-drift", reason: `the scene lost ${formatPercent(-metrics.energyErrorRel)} energy without damping (limit ${formatPercent(tolerances.energyDriftRel)})` };
  }
  const shouldRest = scene.kind === "stack" || (scene.kind === "slope" && slopeShouldHold(scene, scenario.contact));
  const restSpeed = tolerances.restSpeedMPerS ?? DEFAULT_TOLERANCES.restSpeedMPerS;
  if (shouldRest && metrics.residualMaxSpeedMPerS !== undefined && metrics.residualMaxSpeedMPerS > restSpeed) {
    return { verdict: "jitter", reason: `bodies that should rest still moved at up to ${formatNumber(metrics.residualMaxSpeedMPerS)} m/s over the last quarter of the run (limit ${formatNumber(restSpeed)} m/s)` };
  }
  if (scene.kind === "slope" && shouldRest && metrics.creepM !== undefined) {
    const creepLimitM = (tolerances.creepFraction ?? DEFAULT_TOLERANCES.creepFraction) * scene.radiusM;
    if (metrics.creepM > creepLimitM) {
      return { verdict: "creep", reason: `friction should hold the body at ${formatNumber(scene.angleDeg)}°, yet it moved ${formatNumber(metrics.creepM)} m down the slope in the second half of the run (limit ${formatNumber(creepLimitM)} m)` };
    }
  }
  const stepS = context.stepS ?? scenario.dtS / scenario.substeps;
  const stepsPerContact = metrics.contactDurationS !== null ? metrics.contactDurationS / stepS : null;
  if (stepsPerContact !== null && stepsPerContact < minStepsPerContact) {
    return { verdict: "coarse-contact", reason: `the first contact lasted ${formatNumber(stepsPerContact)} steps (minimum ${formatNumber(minStepsPerContact)})` };
  }
  if (metrics.maxEnergyErrorRel > energyPeakRel) {
    return { verdict: "coarse-contact", reason: `energy peaked ${formatPercent(metrics.maxEnergyErrorRel)} above the start inside a contact (limit ${formatPercent(energyPeakRel)})` };
  }
  const contactNote = metrics.contactSteps > 0 ? `, overlap up to ${formatPercent(metrics.maxOverlapFraction)} of the smaller radius, ω·h up to ${formatNumber(omegaH ?? 0)}` : ", no contact";
  return { verdict: "stable", reason: `energy changed ${formatSignedPercent(metrics.energyErrorRel)}${contactNote}` };
}

function amplificationNote(metrics: Metrics): string {
  return metrics.amplification !== null ? `; rebound ${formatNumber(metrics.amplification)}× the model's` : "";
}

function isUndamped(scenario: Scenario): boolean {
  const damping = scenario.contact.damping;
  return damping.kind === "none" || (damping.kind === "coefficient" && damping.value === 0) || (damping.kind === "restitution" && damping.value === 1);
}

function describeTunnel(context: VerdictContext): string {
  const a = `disc ${context.tunnelBodyA}`;
  if (context.tunnelBodyB < 0) return `${a} crossed wall ${-1 - context.tunnelBodyB}`;
  const b = `disc ${context.tunnelBodyB}`;
  switch (context.tunnelKind) {
    case TUNNEL_SKIPPED_CONTACT:
      return `${a} and ${b} passed each other within one step without touching`;
    case TUNNEL_ENTERED_PAST_CLOSEST_APPROACH:
      return `${a} and ${b} were first seen in contact already past their closest approach`;
    case TUNNEL_CENTRES_CROSSED:
      return `${a} passed through ${b}`;
    default:
      return `${a} tunnelled through ${b}`;
  }
}

function formatNumber(value: number): string {
  if (value === 0) return "0";
  const magnitude = Math.abs(value);
  return magnitude >= 1e-3 && magnitude < 1e6 ? String(Number(value.toPrecision(3))) : value.toExponential(2);
}

function formatPercent(fraction: number): string {
  return `${formatNumber(fraction * 100)}%`;
}

function formatSignedPercent(fraction: number): string {
  return fraction > 0 ? `+${formatPercent(fraction)}` : formatPercent(fraction);
}
