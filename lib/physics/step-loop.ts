/**
 * The general step loop of a run: any scene, any integrator, walls, gravity, friction. Steps the
 * bodies with fixed substeps, jumps free flight where it may, and measures what the metrics and the
 * verdict need (work counts, external impulses, energy, overlap, ω·h, the first contact's
 * duration and rebound). The two-body loop (./pair-loop.ts) is its fast twin for pair cells.
 */
import { GRAVITY_J, KINETIC_J, energyTerms, rotationalEnergyJ, type Bodies } from "./bodies";
import { type ContactField, PASS_FIRST_CONTACT_ENDED, PASS_FIRST_CONTACT_STARTED, PASS_MAX_OMEGA_SQUARED, PASS_MAX_OVERLAP_FRACTION, PASS_MAX_OVERLAP_M, PASS_OVERLAPPING_CONTACTS, PASS_POTENTIAL_J, PASS_TUNNEL_DETECTED, PASS_WALL_FORCE_X_N, PASS_WALL_FORCE_Y_N } from "./contact-field";
import type { StepFunction } from "./integrators";
import type { SeriesRecorder } from "./series";
import type { SpinTracker } from "./spin-metrics";
import type { RestTracker } from "./rest-metrics";

/** What the step loop needs besides the state and the force field. */
export interface LoopSettings {
  isVerlet: boolean;
  h: number;
  totalSteps: number;
  allowJumps: boolean;
  contactsChargedMax: number;
  gravity: number;
  gravityImpulsePerStepNs: number;
  startEnergy: number;
  energyScale: number;
  blowUpEnergyFactor: number;
  recorder: SeriesRecorder | null;
  /** Spin metrics of a run with friction, else null. */
  spin: SpinTracker | null;
  /** Resting metrics of a slope or stack, else null. */
  rest: RestTracker | null;
  /** Whether the first contact's end is interpolated on the end gauge (verdict rules ≥ 3). */
  gaugeContactEnd: boolean;
  /** Where each step's kinetic and gravity energy land (`energyTerms`, one pass over the bodies). */
  energyTerms: Float64Array;
}

/** What the step loop measured (work counts, impulses, energy and contact metrics). */
export interface LoopProgress {
  n: number;
  integratedSteps: number;
  chargedContacts: number;
  flightChecks: number;
  flightSteps: number;
  finalFlights: number;
  externalImpulseXNs: number;
  externalImpulseYNs: number;
  energy: number;
  maxEnergyErrorRel: number;
  maxOverlapFraction: number;
  maxOmegaSquared: number;
  contactSteps: number;
  exploded: boolean;
  explodedAtS: number;
  tunnelAtS: number;
  effectiveRestitution: number | null;
  contactDurationS: number | null;
}

/**
 * The step loop of `simulate`, in a function of its own: the loop is hot and compiled on its own,
 * so the code after it (metrics, verdict) never sits in an on-stack-replaced compilation of the
 * loop, which the JIT threw away at the end of every run (a deoptimisation per cell).
 */
export function integrate(bodies: Bodies, field: ContactField, step: StepFunction, settings: LoopSettings): LoopProgress {
  const { isVerlet, h, totalSteps, allowJumps, contactsChargedMax, gravity, gravityImpulsePerStepNs, startEnergy, energyScale, blowUpEnergyFactor, recorder, spin, rest, gaugeContactEnd } = settings;
  const pass = field.pass;
  let chargedContacts = 0;
  let flightChecks = 0;
  let flightSteps = 0;
  let finalFlights = 0;
  let integratedSteps = 0;
  let externalImpulseXNs = 0;
  let externalImpulseYNs = 0;
  let lastWallForceXN = pass[PASS_WALL_FORCE_X_N];
  let lastWallForceYN = pass[PASS_WALL_FORCE_Y_N];
  let energy = startEnergy;
  let maxEnergyErrorRel = 0;
  let maxOverlapFraction = pass[PASS_MAX_OVERLAP_FRACTION];
  let maxOmegaSquared = pass[PASS_MAX_OMEGA_SQUARED];
  let contactSteps = 0;
  let exploded = false;
  let explodedAtS = 0;
  let tunnelAtS = -1;
  let firstContactStartS = 0;
  let firstContactEndS = 0;
  let effectiveRestitution: number | null = null;
  let contactDurationS: number | null = null;
  // The step's kinetic and gravity energy (the energy check and the rest tracker read it).
  const terms = settings.energyTerms;

  if (recorder) recorder.recordUpTo(0, bodies, pass[PASS_POTENTIAL_J], gravity, pass[PASS_MAX_OVERLAP_M], h);

  let n = 0;
  while (n < totalSteps) {
    if (allowJumps && pass[PASS_OVERLAPPING_CONTACTS] === 0) {
      const timeToContactS = field.timeToFirstContactS(bodies);
      flightChecks++;
      // Land at least one full step before the contact so the entry is integrated as plain stepping would.
      const target = timeToContactS === Infinity ? totalSteps : Math.min(totalSteps, n + Math.floor(timeToContactS / h) - 1);
      if (target > n + 1) {
        jumpFreeFlight(bodies, n, target, h, recorder, gravity, timeToContactS !== Infinity);
        if (timeToContactS !== Infinity) flightSteps += target - n;
        else finalFlights++;
        n = target;
        if (n >= totalSteps) break;
      }
    }
    step(bodies, field, h);
    n++;
    integratedSteps++;
    chargedContacts += pass[PASS_OVERLAPPING_CONTACTS] < contactsChargedMax ? pass[PASS_OVERLAPPING_CONTACTS] : contactsChargedMax;

    if (isVerlet) {
      externalImpulseXNs += 0.5 * h * (lastWallForceXN + pass[PASS_WALL_FORCE_X_N]);
      externalImpulseYNs += 0.5 * h * (lastWallForceYN + pass[PASS_WALL_FORCE_Y_N]);
    } else {
      externalImpulseXNs += h * lastWallForceXN;
      externalImpulseYNs += h * lastWallForceYN;
    }
    externalImpulseYNs += gravityImpulsePerStepNs;
    lastWallForceXN = pass[PASS_WALL_FORCE_X_N];
    lastWallForceYN = pass[PASS_WALL_FORCE_Y_N];

    energyTerms(bodies, gravity, terms);
    energy = terms[KINETIC_J] + pass[PASS_POTENTIAL_J] + terms[GRAVITY_J];
    if (spin) {
      energy += rotationalEnergyJ(bodies);
      spin.afterStep(bodies, field, h, isVerlet);
    }
    if (rest) rest.afterStep(n, terms[KINETIC_J] + rotationalEnergyJ(bodies), bodies);
    const energyErrorRel = (energy - startEnergy) / energyScale;
    if (energyErrorRel > maxEnergyErrorRel) maxEnergyErrorRel = energyErrorRel;
    if (pass[PASS_MAX_OVERLAP_FRACTION] > maxOverlapFraction) maxOverlapFraction = pass[PASS_MAX_OVERLAP_FRACTION];
    if (pass[PASS_MAX_OMEGA_SQUARED] > maxOmegaSquared) maxOmegaSquared = pass[PASS_MAX_OMEGA_SQUARED];
    if (pass[PASS_OVERLAPPING_CONTACTS] > 0) contactSteps++;
    if (pass[PASS_TUNNEL_DETECTED] !== 0 && tunnelAtS < 0) tunnelAtS = n * h;

    if (pass[PASS_FIRST_CONTACT_STARTED] !== 0) {
      const before = field.run.firstContactStartOverlapBeforeM;
      const after = field.run.firstContactStartOverlapM;
      firstContactStartS = (n - 1) * h + (h * -before) / (after - before);
    }
    if (pass[PASS_FIRST_CONTACT_ENDED] !== 0) {
      // Rules ≥ 3 interpolate the end on the field's end gauge (the force for a linear contact, so
      // linear results are unchanged; for Hertz the overlap beyond the force's zero, second order);
      // rules 1 and 2 on the force, as the cells stored under them were.
      const before = gaugeContactEnd ? field.run.firstContactEndGaugePrevious : field.run.firstContactForcePreviousN;
      const after = gaugeContactEnd ? field.run.firstContactEndGauge : field.run.firstContactForceN;
      const fraction = before > 0 ? before / (before - after) : 0;
      firstContactEndS = Math.max(firstContactStartS, (n - 1) * h + h * fraction);
      contactDurationS = firstContactEndS - firstContactStartS;
      const approachIn = field.run.firstContactApproachSpeedMPerS;
      effectiveRestitution = approachIn > 0 ? -field.firstContactEndApproachSpeed(bodies) / approachIn : null;
      if (spin) spin.firstContactEnded(bodies, field);
    }

    if (recorder) recorder.recordUpTo(n, bodies, pass[PASS_POTENTIAL_J], gravity, pass[PASS_MAX_OVERLAP_M], h);

    if (!Number.isFinite(energy) || (startEnergy > 0 && energy > blowUpEnergyFactor * startEnergy)) {
      exploded = true;
      explodedAtS = n * h;
      break;
    }
  }

  return {
    n,
    integratedSteps,
    chargedContacts,
    flightChecks,
    flightSteps,
    finalFlights,
    externalImpulseXNs,
    externalImpulseYNs,
    energy,
    maxEnergyErrorRel,
    maxOverlapFraction,
    maxOmegaSquared,
    contactSteps,
    exploded,
    explodedAtS,
    tunnelAtS,
    effectiveRestitution,
    contactDurationS,
  };
}

/**
 * Advances every body in a straight line from step `from` to step `to` (no force acts: no contact
 * and no gravity), recording the samples that fall in between.
 *
 * Before a contact (`replicateRounding`), positions are advanced by the same additions plain
 * stepping performs (x += h·v once per step; no forces, no bookkeeping), so the contact is entered
 * from bit-identical positions and the fast and plain runs agree exactly — also when a contact
 * starts exactly on a step boundary, where any rounding difference would shift it by a step.
 * After the last contact nothing depends on the positions any more, and the jump is one product.
 */
export function jumpFreeFlight(bodies: Bodies, from: number, to: number, h: number, recorder: SeriesRecorder | null, gravity: number, replicateRounding: boolean): void {
  const { count, x, y, vx, vy } = bodies;
  let position = from;
  while (position < to) {
    const sampleStep = recorder ? recorder.nextSampleStep() : Infinity;
    const segmentEnd = sampleStep < to ? sampleStep : to;
    const segmentSteps = segmentEnd - position;
    for (let i = 0; i < count; i++) {
      const stepX = h * vx[i];
      const stepY = h * vy[i];
      if (replicateRounding) {
        let px = x[i];
        let py = y[i];
        if (stepX !== 0) for (let k = 0; k < segmentSteps; k++) px += stepX;
        if (stepY !== 0) for (let k = 0; k < segmentSteps; k++) py += stepY;
        x[i] = px;
        y[i] = py;
      } else {
        x[i] += segmentSteps * stepX;
        y[i] += segmentSteps * stepY;
      }
    }
    position = segmentEnd;
    if (recorder && position === sampleStep) recorder.recordUpTo(position, bodies, 0, gravity, 0, h);
  }
}
