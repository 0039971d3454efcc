/**
 * One run of a scenario: builds the scene, integrates it with fixed substeps, measures the metrics
 * and gives the verdict. Pure and deterministic: the same scenario always yields byte-identical
 * metrics (no clocks, no Math.random, no dependence on object iteration order).
 */
import type { Metrics, RunOptions, RunResult, Scenario, TimeSeries, Verdict, WorkCounts } from "./types";
import { DEFAULT_TANGENTIAL_STIFFNESS_RATIO, DEFAULT_TOLERANCES, STEP_STABILITY_LIMIT_OMEGA_H } from "./constants";
import type { TangentialParameters } from "./tangential";
import { buildScene } from "./scenes";
import { kineticEnergyJ, gravityPotentialJ, momentumMagnitudeSumNs, rotationalEnergyJ, totalMomentumXNs, totalMomentumYNs, type Bodies } from "./bodies";
import { SpinTracker, isIsolatedScene } from "./spin-metrics";
import { RestTracker, isRestingScene, slopeShouldHold } from "./rest-metrics";
import { primeForces, stepFunctionFor, type StepFunction } from "./integrators";
import {
  BROAD_PHASE_ALL_PAIRS,
  BROAD_PHASE_GRID,
  CONTACT_HERTZ,
  CONTACT_LINEAR,
  ContactField,
  DAMPING_COEFFICIENT,
  DAMPING_DIMENSIONLESS,
  DAMPING_NONE,
  FIRST_CONTACT_ENDED,
  SKIPPED_CONTACT_DEPTH_FRACTION,
  TUNNEL_CENTRES_CROSSED,
  TUNNEL_ENTERED_PAST_CLOSEST_APPROACH,
  TUNNEL_NONE,
  TUNNEL_SKIPPED_CONTACT,
  FIRST_CONTACT_ACTIVE,
  FIRST_CONTACT_PENDING,
  type ContactFieldParameters,
  type Wall,
} from "./contact-field";
import { hertzDimensionlessDampingForRestitution, hertzRestitutionEstimate, linearDampingRatioForRestitution } from "./damping";
import { effectiveModulusRigidWallPa, effectiveModulusSameMaterialPa, linearRestitutionForDampingRatio } from "./analytic";
import { MAX_BODIES_FOR_FREE_FLIGHT_JUMPS } from "./constants";
import { contactCap, workUnitsOf } from "./work-units";

/**
 * Verdict rules from which the first contact's end is interpolated on the contact field's end gauge
 * (second order for Hertz contacts) instead of linearly on the force (first order for Hertz).
 */
export const CONTACT_END_GAUGE_SINCE_RULES = 3;

/** Number of integrator substeps a run takes: ⌈duration / (dtS / substeps)⌉ (at least 1). */
export function totalSubsteps(scenario: Pick<Scenario, "dtS" | "substeps" | "durationS">): number {
  const substepS = scenario.dtS / scenario.substeps;
  // The relative slack keeps 0.1 / 1e-5 = 9999.999… from becoming 10001 or 9999.
  return Math.max(1, Math.ceil((scenario.durationS / substepS) * (1 - 1e-12)));
}

/** Builds the contact force field of a scenario. */
export function createContactField(
  scenario: Scenario,
  walls: readonly Wall[],
  gravityMPerS2: number,
  bodyCount: number,
  broadPhase?: RunOptions["broadPhase"],
  reuse = false,
): ContactField {
  const contact = scenario.contact;
  const isHertz = contact.model === "hertz";
  let hertzModulusFactorPa = 0;
  let wallHertzModulusFactorPa = 0;
  if (isHertz && contact.material) {
    // Discs of one material (1/E* = 2(1 − ν²)/E); walls of it too, or rigid (1/E* = (1 − ν²)/E, twice the E*).
    hertzModulusFactorPa = (4 / 3) * effectiveModulusSameMaterialPa(contact.material.youngsModulusPa, contact.material.poissonRatio);
    wallHertzModulusFactorPa = contact.wall === "rigid" ? (4 / 3) * effectiveModulusRigidWallPa(contact.material.youngsModulusPa, contact.material.poissonRatio) : hertzModulusFactorPa;
  }
  let dampingMode: typeof DAMPING_NONE | typeof DAMPING_COEFFICIENT | typeof DAMPING_DIMENSIONLESS = DAMPING_NONE;
  let dampingValue = 0;
  const damping = contact.damping;
  if (damping.kind === "coefficient" && damping.value > 0) {
    dampingMode = DAMPING_COEFFICIENT;
    dampingValue = damping.value;
  } else if (damping.kind === "restitution" && damping.value < 1) {
    dampingMode = DAMPING_DIMENSIONLESS;
    dampingValue = isHertz ? hertzDimensionlessDampingForRestitution(damping.value) : linearDampingRatioForRestitution(damping.value);
  }
  const friction = contact.friction;
  const rollingResistance = contact.rollingResistance ?? 0;
  let tangential: TangentialParameters | undefined;
  if ((friction !== undefined && (friction.coefficient > 0 || (friction.staticCoefficient ?? 0) > 0)) || rollingResistance > 0) {
    const coefficient = friction?.coefficient ?? 0;
    tangential = {
      coefficient,
      staticCoefficient: friction?.staticCoefficient ?? coefficient,
      stiffnessRatio: friction?.stiffnessRatio ?? DEFAULT_TANGENTIAL_STIFFNESS_RATIO,
      stiffnessNPerM: friction?.stiffness ?? 0,
      dampingRatio: friction?.dampingRatio ?? 0,
      rollingResistance,
    };
  }
  const useGrid = broadPhase === undefined ? scenario.scene.kind === "box" || bodyCount > MAX_BODIES_FOR_FREE_FLIGHT_JUMPS : broadPhase === "grid";
  const parameters: ContactFieldParameters = {
    model: isHertz ? CONTACT_HERTZ : CONTACT_LINEAR,
    stiffness: contact.stiffness ?? 0,
    hertzModulusFactorPa,
    wallHertzModulusFactorPa,
    dampingMode,
    dampingValue,
    walls,
    gravityMPerS2,
    broadPhase: useGrid ? BROAD_PHASE_GRID : BROAD_PHASE_ALL_PAIRS,
    nearMissDepthFraction: (scenario.verdictRules ?? 1) >= 2 ? SKIPPED_CONTACT_DEPTH_FRACTION : 0,
    tangential,
  };
  if (!reuse) return new ContactField(parameters);
  reusedField.configure(parameters);
  return reusedField;
}

/** One field serves every run in this thread when asked to (runs are synchronous; see `configure`). */
const reusedField = new ContactField({
  model: CONTACT_LINEAR,
  stiffness: 0,
  hertzModulusFactorPa: 0,
  dampingMode: DAMPING_NONE,
  dampingValue: 0,
  walls: [],
  gravityMPerS2: 0,
  broadPhase: BROAD_PHASE_ALL_PAIRS,
  nearMissDepthFraction: 0,
});

export function simulate(scenario: Scenario, options: RunOptions = {}): RunResult {
  const setup = buildScene(scenario.scene, scenario.seed);
  const bodies = setup.bodies;
  const gravity = setup.gravityMPerS2;
  const field = createContactField(scenario, setup.walls, gravity, bodies.count, options.broadPhase, bodies.count <= MAX_BODIES_FOR_FREE_FLIGHT_JUMPS);
  // Rotation is integrated only when friction or rolling resistance can turn a body: a
  // frictionless run keeps exactly the arithmetic (and the results) it had before rotation existed.
  const rotating = field.frictional;
  bodies.rotating = rotating;
  const spin = rotating ? new SpinTracker(bodies, field, gravity, isIsolatedScene(scenario)) : null;
  const rest = isRestingScene(scenario) ? new RestTracker(scenario, bodies, gravity, totalSubsteps(scenario)) : null;
  const step = stepFunctionFor(scenario.integrator);
  const isVerlet = scenario.integrator === "velocity-verlet";
  const h = scenario.dtS / scenario.substeps;
  const totalSteps = totalSubsteps(scenario);
  const tolerances = scenario.tolerances;
  const gaugeContactEnd = (scenario.verdictRules ?? 1) >= CONTACT_END_GAUGE_SINCE_RULES;
  const allowJumps = options.stepping !== "plain" && gravity === 0 && bodies.count <= MAX_BODIES_FOR_FREE_FLIGHT_JUMPS && !rotating;
  // Work counts (./work-units.ts): what the run does, never a clock.
  const contactsChargedMax = contactCap(bodies.count, setup.walls.length);

  const recorder = options.maxSamples && options.maxSamples > 0 ? new SeriesRecorder(bodies.count, Math.floor(options.maxSamples), totalSteps, rotating ? field : null) : null;

  primeForces(bodies, field);
  const startEnergy = kineticEnergyJ(bodies) + field.contactPotentialJ + gravityPotentialJ(bodies, gravity) + rotationalEnergyJ(bodies);
  if (spin) spin.start(bodies, field);
  const energyScale = startEnergy !== 0 ? Math.abs(startEnergy) : 1;
  const startMomentumX = totalMomentumXNs(bodies);
  const startMomentumY = totalMomentumYNs(bodies);
  let momentumScale = Math.hypot(startMomentumX, startMomentumY);
  if (momentumScale === 0) momentumScale = momentumMagnitudeSumNs(bodies);
  if (momentumScale === 0) momentumScale = 1;
  let totalMassKg = 0;
  for (let i = 0; i < bodies.count; i++) totalMassKg += bodies.mass[i];
  const gravityImpulsePerStepNs = -h * gravity * totalMassKg;

  const loop = takesTwoBodyPath(scenario, bodies, field, gravity, recorder) ? integratePair : null;
  const settings: LoopSettings = {
    isVerlet,
    h,
    totalSteps,
    allowJumps,
    contactsChargedMax,
    gravity,
    gravityImpulsePerStepNs,
    startEnergy,
    energyScale,
    blowUpEnergyFactor: tolerances.blowUpEnergyFactor,
    recorder,
    spin,
    rest,
    gaugeContactEnd,
  };
  const progress = loop ? loop(bodies, field, settings) : integrate(bodies, field, step, settings);
  const { n, chargedContacts, flightChecks, flightSteps, finalFlights, integratedSteps, externalImpulseXNs, externalImpulseYNs, energy, maxEnergyErrorRel, maxOverlapFraction, maxOmegaSquared, contactSteps, exploded, explodedAtS, tunnelAtS, effectiveRestitution, contactDurationS } = progress;

  const expected = effectiveRestitution !== null && field.firstContactPhase === FIRST_CONTACT_ENDED ? expectedRestitution(field, bodies, scenario) : null;
  const isolatedScene = scenario.scene.kind === "pair" || scenario.scene.kind === "wall";
  const endMomentumX = totalMomentumXNs(bodies);
  const endMomentumY = totalMomentumYNs(bodies);
  const metrics: Metrics = {
    momentumDriftRelX: (endMomentumX - startMomentumX - externalImpulseXNs) / momentumScale,
    momentumDriftRelY: (endMomentumY - startMomentumY - externalImpulseYNs) / momentumScale,
    energyErrorRel: (energy - startEnergy) / energyScale,
    maxEnergyErrorRel,
    effectiveRestitution,
    maxOverlapFraction,
    contactDurationS,
    contactSteps,
    tunneled: field.tunnelKind !== TUNNEL_NONE,
    exploded,
    steps: n,
    maxOmegaH: contactSteps > 0 || maxOmegaSquared > 0 ? Math.sqrt(maxOmegaSquared) * h : null,
    // Only an isolated binary contact (pair, wall) has a rebound to compare with the model's: in a
    // row or a box the first contact's bodies are pushed by neighbours while it lasts.
    amplification: isolatedScene && effectiveRestitution !== null && expected !== null && expected > 0 ? Math.abs(effectiveRestitution) / expected : null,
  };

  if (spin) spin.finish(metrics, bodies, field, h);
  if (rest) rest.finish(metrics, bodies, field, h, !exploded);

  const { verdict, reason } = judge(metrics, scenario, {
    explodedAtS,
    energy,
    startEnergy,
    tunnelAtS,
    tunnelKind: field.tunnelKind,
    tunnelBodyA: field.tunnelBodyA,
    tunnelBodyB: field.tunnelBodyB,
    expectedRestitution: expected,
    stepS: h,
  });
  const work: WorkCounts = {
    bodies: bodies.count,
    walls: setup.walls.length,
    grid: field.broadPhase === BROAD_PHASE_GRID,
    hertz: field.model === CONTACT_HERTZ,
    integratedSteps,
    chargedContacts,
    flightChecks,
    flightSteps,
    finalFlights,
  };
  const result: RunResult = { metrics, verdict, reason, workUnits: workUnitsOf(work), work };
  if (recorder) result.series = recorder.series;
  return result;
}

/** What the step loop needs besides the state and the force field. */
interface LoopSettings {
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
}

/** What the step loop measured (work counts, impulses, energy and contact metrics). */
interface LoopProgress {
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
function integrate(bodies: Bodies, field: ContactField, step: StepFunction, settings: LoopSettings): LoopProgress {
  const { isVerlet, h, totalSteps, allowJumps, contactsChargedMax, gravity, gravityImpulsePerStepNs, startEnergy, energyScale, blowUpEnergyFactor, recorder, spin, rest, gaugeContactEnd } = settings;
  let chargedContacts = 0;
  let flightChecks = 0;
  let flightSteps = 0;
  let finalFlights = 0;
  let integratedSteps = 0;
  if (recorder) recorder.recordUpTo(0, bodies, field.contactPotentialJ, gravity, field.maxOverlapM, h);
  let externalImpulseXNs = 0;
  let externalImpulseYNs = 0;
  let lastWallForceXN = field.wallForceXN;
  let lastWallForceYN = field.wallForceYN;
  let energy = startEnergy;
  let maxEnergyErrorRel = 0;
  let maxOverlapFraction = field.maxOverlapFraction;
  let maxOmegaSquared = field.maxOmegaSquared;
  let contactSteps = 0;
  let exploded = false;
  let explodedAtS = 0;
  let tunnelAtS = -1;
  let firstContactStartS = 0;
  let firstContactEndS = 0;
  let effectiveRestitution: number | null = null;
  let contactDurationS: number | null = null;

  if (recorder) recorder.recordUpTo(0, bodies, field.contactPotentialJ, gravity, field.maxOverlapM, h);

  let n = 0;
  while (n < totalSteps) {
    if (allowJumps && field.overlappingContacts === 0) {
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
    chargedContacts += field.overlappingContacts < contactsChargedMax ? field.overlappingContacts : contactsChargedMax;

    if (isVerlet) {
      externalImpulseXNs += 0.5 * h * (lastWallForceXN + field.wallForceXN);
      externalImpulseYNs += 0.5 * h * (lastWallForceYN + field.wallForceYN);
    } else {
      externalImpulseXNs += h * lastWallForceXN;
      externalImpulseYNs += h * lastWallForceYN;
    }
    externalImpulseYNs += gravityImpulsePerStepNs;
    lastWallForceXN = field.wallForceXN;
    lastWallForceYN = field.wallForceYN;

    energy = kineticEnergyJ(bodies) + field.contactPotentialJ + gravityPotentialJ(bodies, gravity);
    if (spin) {
      energy += rotationalEnergyJ(bodies);
      spin.afterStep(bodies, field, h, isVerlet);
    }
    if (rest) rest.afterStep(n, kineticEnergyJ(bodies) + rotationalEnergyJ(bodies), bodies);
    const energyErrorRel = (energy - startEnergy) / energyScale;
    if (energyErrorRel > maxEnergyErrorRel) maxEnergyErrorRel = energyErrorRel;
    if (field.maxOverlapFraction > maxOverlapFraction) maxOverlapFraction = field.maxOverlapFraction;
    if (field.maxOmegaSquared > maxOmegaSquared) maxOmegaSquared = field.maxOmegaSquared;
    if (field.overlappingContacts > 0) contactSteps++;
    if (field.tunnelDetectedThisPass && tunnelAtS < 0) tunnelAtS = n * h;

    if (field.firstContactStartedThisPass) {
      const before = field.firstContactStartOverlapBeforeM;
      const after = field.firstContactStartOverlapM;
      firstContactStartS = (n - 1) * h + (h * -before) / (after - before);
    }
    if (field.firstContactEndedThisPass) {
      // Rules ≥ 3 interpolate the end on the field's end gauge (the force for a linear contact, so
      // linear results are unchanged; for Hertz the overlap beyond the force's zero, second order);
      // rules 1 and 2 on the force, as the cells stored under them were.
      const before = gaugeContactEnd ? field.firstContactEndGaugePrevious : field.firstContactForcePreviousN;
      const after = gaugeContactEnd ? field.firstContactEndGauge : field.firstContactForceN;
      const fraction = before > 0 ? before / (before - after) : 0;
      firstContactEndS = Math.max(firstContactStartS, (n - 1) * h + h * fraction);
      contactDurationS = firstContactEndS - firstContactStartS;
      const approachIn = field.firstContactApproachSpeedMPerS;
      effectiveRestitution = approachIn > 0 ? -field.firstContactEndApproachSpeed(bodies) / approachIn : null;
      if (spin) spin.firstContactEnded(bodies, field);
    }

    if (recorder) recorder.recordUpTo(n, bodies, field.contactPotentialJ, gravity, field.maxOverlapM, h);

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

/** Keys of a contact spec the two-body loop knows; anything else (a tangential law) takes the general path. */
const TWO_BODY_CONTACT_KEYS = new Set(["model", "stiffness", "material", "damping"]);

/**
 * Whether a run may take `integratePair`: two discs, no walls, no gravity, a linear normal law,
 * symplectic Euler, all-pairs broad phase and no series. The contact spec must carry nothing but
 * the normal law: friction/rotation (its own issue) adds tangential parameters and state that this
 * loop does not model, so any extra key sends the run through the general path, which stays the
 * reference for everything.
 */
function takesTwoBodyPath(scenario: Scenario, bodies: Bodies, field: ContactField, gravity: number, recorder: SeriesRecorder | null): boolean {
  if (bodies.count !== 2 || field.wallCount !== 0 || gravity !== 0 || recorder !== null || field.frictional) return false;
  if (field.model !== CONTACT_LINEAR || field.broadPhase !== BROAD_PHASE_ALL_PAIRS || scenario.integrator !== "symplectic-euler") return false;
  for (const key of Object.keys(scenario.contact)) if (!TWO_BODY_CONTACT_KEYS.has(key)) return false;
  return true;
}

/**
 * `integrate` for two discs in free space (pair cells): the same arithmetic in the same order as
 * `stepSymplecticEuler` + `ContactField.evaluate`/`pair`/`normalForce` + the step loop's
 * bookkeeping, with the state and every running value in locals (no broad phase, no array or
 * property traffic per step). Results are byte-identical to the general path
 * (tests/unit/physics/kernel-identity.test.ts and the fast/plain determinism tests hold it to
 * that); the field and the bodies are written back at the end so `simulate` reads them as before.
 */
function integratePair(bodies: Bodies, field: ContactField, settings: LoopSettings): LoopProgress {
  const { h, totalSteps, allowJumps, contactsChargedMax, gravity, gravityImpulsePerStepNs, startEnergy, energyScale, blowUpEnergyFactor } = settings;
  const { x, y, vx, vy, fx, fy, previousX, previousY, mass, inverseMass, radius } = bodies;
  const m0 = mass[0];
  const m1 = mass[1];
  const im0 = inverseMass[0];
  const im1 = inverseMass[1];
  const r0 = radius[0];
  const r1 = radius[1];
  // evaluate(): fy = −m·g, with g = 0 here (kept as the same product so a signed zero stays the same).
  const restFy0 = -m0 * gravity;
  const restFy1 = -m1 * gravity;
  let maxRadius = 0;
  if (r0 > maxRadius) maxRadius = r0;
  if (r1 > maxRadius) maxRadius = r1;
  const contactDistance = r0 + r1;
  const contactDistanceSquared = contactDistance * contactDistance;
  const smallerRadius = r0 < r1 ? r0 : r1;
  const reducedMass = 1 / (im0 + im1);
  const k = field.stiffness;
  // dampingCoefficient(reducedMass, k): constant for a linear pair.
  const dampingMode = field.dampingMode;
  const c = dampingMode === DAMPING_NONE ? 0 : dampingMode === DAMPING_COEFFICIENT ? field.dampingValue : 2 * field.dampingValue * Math.sqrt(reducedMass * k);
  const omegaSquared = k / reducedMass;
  const nearMissDepthFraction = field.nearMissDepthFraction;
  const wallForceXN = 0;
  const wallForceYN = 0;

  let x0 = x[0], y0 = y[0], vx0 = vx[0], vy0 = vy[0], fx0 = fx[0], fy0 = fy[0], px0 = previousX[0], py0 = previousY[0];
  let x1 = x[1], y1 = y[1], vx1 = vx[1], vy1 = vy[1], fx1 = fx[1], fy1 = fy[1], px1 = previousX[1], py1 = previousY[1];

  // Field state after priming.
  let contactPotentialJ = field.contactPotentialJ;
  let overlappingContacts = field.overlappingContacts;
  let passMaxOverlapFraction = field.maxOverlapFraction;
  let passMaxOverlapM = field.maxOverlapM;
  let passMaxOmegaSquared = field.maxOmegaSquared;
  let tunnelKind = field.tunnelKind;
  let tunnelBodyA = field.tunnelBodyA;
  let tunnelBodyB = field.tunnelBodyB;
  let tunnelDetectedThisPass = field.tunnelDetectedThisPass;
  let phase = field.firstContactPhase;
  let firstA = field.firstContactA;
  let firstB = field.firstContactB;
  let startedThisPass = field.firstContactStartedThisPass;
  let endedThisPass = field.firstContactEndedThisPass;
  let startOverlapBefore = field.firstContactStartOverlapBeforeM;
  let startOverlap = field.firstContactStartOverlapM;
  let approachSpeed = field.firstContactApproachSpeedMPerS;
  let forcePrevious = field.firstContactForcePreviousN;
  let forceNow = field.firstContactForceN;
  let endNormalX = field.firstContactEndNormalX;
  let endNormalY = field.firstContactEndNormalY;

  let chargedContacts = 0;
  let flightChecks = 0;
  let flightSteps = 0;
  let finalFlights = 0;
  let integratedSteps = 0;
  let externalImpulseXNs = 0;
  let externalImpulseYNs = 0;
  let lastWallForceXN = field.wallForceXN;
  let lastWallForceYN = field.wallForceYN;
  let energy = startEnergy;
  let maxEnergyErrorRel = 0;
  let maxOverlapFraction = field.maxOverlapFraction;
  let maxOmegaSquared = field.maxOmegaSquared;
  let contactSteps = 0;
  let exploded = false;
  let explodedAtS = 0;
  let tunnelAtS = -1;
  let firstContactStartS = 0;
  let firstContactEndS = 0;
  let effectiveRestitution: number | null = null;
  let contactDurationS: number | null = null;

  let n = 0;
  while (n < totalSteps) {
    if (allowJumps && overlappingContacts === 0) {
      x[0] = x0; y[0] = y0; vx[0] = vx0; vy[0] = vy0;
      x[1] = x1; y[1] = y1; vx[1] = vx1; vy[1] = vy1;
      const timeToContactS = field.timeToFirstContactS(bodies);
      flightChecks++;
      const target = timeToContactS === Infinity ? totalSteps : Math.min(totalSteps, n + Math.floor(timeToContactS / h) - 1);
      if (target > n + 1) {
        jumpFreeFlight(bodies, n, target, h, null, gravity, timeToContactS !== Infinity);
        x0 = x[0]; y0 = y[0]; x1 = x[1]; y1 = y[1];
        if (timeToContactS !== Infinity) flightSteps += target - n;
        else finalFlights++;
        n = target;
        if (n >= totalSteps) break;
      }
    }

    // stepSymplecticEuler: kick, remember the position, drift (body 0, then body 1).
    const kick0 = h * im0;
    vx0 += kick0 * fx0;
    vy0 += kick0 * fy0;
    px0 = x0;
    py0 = y0;
    x0 += h * vx0;
    y0 += h * vy0;
    const kick1 = h * im1;
    vx1 += kick1 * fx1;
    vy1 += kick1 * fy1;
    px1 = x1;
    py1 = y1;
    x1 += h * vx1;
    y1 += h * vy1;

    // ContactField.evaluate: resets, cutoff, the one pair (no walls).
    fx0 = 0;
    fy0 = restFy0;
    fx1 = 0;
    fy1 = restFy1;
    contactPotentialJ = 0;
    overlappingContacts = 0;
    passMaxOverlapFraction = 0;
    passMaxOverlapM = 0;
    passMaxOmegaSquared = 0;
    tunnelDetectedThisPass = false;
    startedThisPass = false;
    endedThisPass = false;
    let seenThisPass = false;

    // ContactField.pair(0, 1).
    const dx = x1 - x0;
    const dy = y1 - y0;
    const distanceSquared = dx * dx + dy * dy;
    if (distanceSquared >= contactDistanceSquared) {
      // The cutoff (largest drift of the step) matters only for a pair out of contact: computed here.
      const driftX0 = x0 - px0;
      const driftY0 = y0 - py0;
      const drift0 = driftX0 * driftX0 + driftY0 * driftY0;
      const driftX1 = x1 - px1;
      const driftY1 = y1 - py1;
      const drift1 = driftX1 * driftX1 + driftY1 * driftY1;
      let maxDisplacementSquared = 0;
      if (drift0 > maxDisplacementSquared) maxDisplacementSquared = drift0;
      if (drift1 > maxDisplacementSquared) maxDisplacementSquared = drift1;
      const cutoffM = 2 * maxRadius + 2 * Math.sqrt(maxDisplacementSquared);
      const cutoffSquared = cutoffM * cutoffM;
      if (distanceSquared < cutoffSquared) {
        // checkSkippedContact
        const previousDx = px1 - px0;
        const previousDy = py1 - py0;
        if (!(previousDx * previousDx + previousDy * previousDy < contactDistanceSquared)) {
          const stepX = dx - previousDx;
          const stepY = dy - previousDy;
          const stepSquared = stepX * stepX + stepY * stepY;
          if (stepSquared !== 0) {
            const along = -(previousDx * stepX + previousDy * stepY) / stepSquared;
            if (!(along <= 0 || along >= 1)) {
              const closestX = previousDx + along * stepX;
              const closestY = previousDy + along * stepY;
              const depthLimit = Math.sqrt(contactDistanceSquared) - nearMissDepthFraction * smallerRadius;
              if (closestX * closestX + closestY * closestY < depthLimit * depthLimit) {
                tunnelDetectedThisPass = true;
                if (tunnelKind === TUNNEL_NONE) {
                  tunnelKind = TUNNEL_SKIPPED_CONTACT;
                  tunnelBodyA = 0;
                  tunnelBodyB = 1;
                }
              }
            }
          }
        }
      }
    } else {
      const previousDx = px1 - px0;
      const previousDy = py1 - py0;
      const previousDistanceSquared = previousDx * previousDx + previousDy * previousDy;
      const distance = Math.sqrt(distanceSquared);
      let normalX: number;
      let normalY: number;
      let tunnel = TUNNEL_NONE;
      if (distance > 0) {
        normalX = dx / distance;
        normalY = dy / distance;
      } else {
        const previousDistance = Math.sqrt(previousDistanceSquared);
        normalX = previousDistance > 0 ? previousDx / previousDistance : 1;
        normalY = previousDistance > 0 ? previousDy / previousDistance : 0;
        tunnel = TUNNEL_CENTRES_CROSSED;
      }
      if (tunnel !== TUNNEL_NONE) {
        tunnelDetectedThisPass = true;
        if (tunnelKind === TUNNEL_NONE) {
          tunnelKind = tunnel;
          tunnelBodyA = 0;
          tunnelBodyB = 1;
        }
      }
      tunnel = TUNNEL_NONE;
      if (previousDistanceSquared >= contactDistanceSquared) {
        if (dx * (dx - previousDx) + dy * (dy - previousDy) >= 0) {
          // passedDeeperThanTolerance(r0, r1, contactDistance, previousDx, previousDy, dx − previousDx, dy − previousDy)
          const stepX = dx - previousDx;
          const stepY = dy - previousDy;
          const stepSquared = stepX * stepX + stepY * stepY;
          let along = stepSquared > 0 ? -(previousDx * stepX + previousDy * stepY) / stepSquared : 0;
          if (along < 0) along = 0;
          else if (along > 1) along = 1;
          const closestX = previousDx + along * stepX;
          const closestY = previousDy + along * stepY;
          const depthLimit = contactDistance - nearMissDepthFraction * smallerRadius;
          if (closestX * closestX + closestY * closestY < depthLimit * depthLimit) tunnel = TUNNEL_ENTERED_PAST_CLOSEST_APPROACH;
        }
      } else if (dx * previousDx + dy * previousDy <= 0) {
        tunnel = TUNNEL_CENTRES_CROSSED;
      }
      if (tunnel !== TUNNEL_NONE) {
        tunnelDetectedThisPass = true;
        if (tunnelKind === TUNNEL_NONE) {
          tunnelKind = tunnel;
          tunnelBodyA = 0;
          tunnelBodyB = 1;
        }
      }
      const overlap = contactDistance - distance;
      const overlapRate = (vx0 - vx1) * normalX + (vy0 - vy1) * normalY;
      // normalForce, linear law.
      if (overlap > 0) contactPotentialJ += 0.5 * k * overlap * overlap;
      const force = k * overlap + c * overlapRate;
      if (omegaSquared > passMaxOmegaSquared) passMaxOmegaSquared = omegaSquared;
      const pushX = force > 0 ? force * normalX : 0;
      const pushY = force > 0 ? force * normalY : 0;
      fx0 -= pushX;
      fy0 -= pushY;
      fx1 += pushX;
      fy1 += pushY;
      overlappingContacts++;
      const fraction = overlap / smallerRadius;
      if (fraction > passMaxOverlapFraction) passMaxOverlapFraction = fraction;
      if (overlap > passMaxOverlapM) passMaxOverlapM = overlap;
      if (phase !== FIRST_CONTACT_ENDED) {
        // trackFirstContact(0, 1, …)
        const isNewContact = previousDistanceSquared >= contactDistanceSquared;
        if (phase === FIRST_CONTACT_PENDING) {
          if (isNewContact) {
            phase = FIRST_CONTACT_ACTIVE;
            firstA = 0;
            firstB = 1;
            startedThisPass = true;
            seenThisPass = true;
            startOverlapBefore = contactDistance - Math.sqrt(previousDistanceSquared);
            startOverlap = overlap;
            approachSpeed = overlapRate;
            forcePrevious = 0;
            forceNow = force;
            if (force <= 0) {
              forceNow = force;
              phase = FIRST_CONTACT_ENDED;
              endedThisPass = true;
              endNormalX = normalX;
              endNormalY = normalY;
            }
          }
        } else if (phase === FIRST_CONTACT_ACTIVE && firstA === 0 && firstB === 1) {
          seenThisPass = true;
          forcePrevious = forceNow;
          forceNow = force;
          if (force <= 0) {
            forceNow = force;
            phase = FIRST_CONTACT_ENDED;
            endedThisPass = true;
            endNormalX = normalX;
            endNormalY = normalY;
          }
        }
      }
    }
    if (phase === FIRST_CONTACT_ACTIVE && !seenThisPass) {
      // endFirstContactWithoutOverlap (the first contact is this pair: the only one there is).
      const endDx = x1 - x0;
      const endDy = y1 - y0;
      const distance = Math.sqrt(endDx * endDx + endDy * endDy);
      const normalX = endDx / distance;
      const normalY = endDy / distance;
      const overlap = contactDistance - distance;
      const overlapRate = (vx0 - vx1) * normalX + (vy0 - vy1) * normalY;
      const force = k * overlap + c * overlapRate;
      forcePrevious = forceNow;
      forceNow = Math.min(force, 0);
      phase = FIRST_CONTACT_ENDED;
      endedThisPass = true;
      endNormalX = normalX;
      endNormalY = normalY;
    }

    // The step loop's bookkeeping (integrate).
    n++;
    integratedSteps++;
    chargedContacts += overlappingContacts < contactsChargedMax ? overlappingContacts : contactsChargedMax;
    externalImpulseXNs += h * lastWallForceXN;
    externalImpulseYNs += h * lastWallForceYN;
    externalImpulseYNs += gravityImpulsePerStepNs;
    lastWallForceXN = wallForceXN;
    lastWallForceYN = wallForceYN;

    let kinetic = 0;
    kinetic += 0.5 * m0 * (vx0 * vx0 + vy0 * vy0);
    kinetic += 0.5 * m1 * (vx1 * vx1 + vy1 * vy1);
    energy = kinetic + contactPotentialJ + 0;
    const energyErrorRel = (energy - startEnergy) / energyScale;
    if (energyErrorRel > maxEnergyErrorRel) maxEnergyErrorRel = energyErrorRel;
    if (passMaxOverlapFraction > maxOverlapFraction) maxOverlapFraction = passMaxOverlapFraction;
    if (passMaxOmegaSquared > maxOmegaSquared) maxOmegaSquared = passMaxOmegaSquared;
    if (overlappingContacts > 0) contactSteps++;
    if (tunnelDetectedThisPass && tunnelAtS < 0) tunnelAtS = n * h;

    if (startedThisPass) {
      firstContactStartS = (n - 1) * h + (h * -startOverlapBefore) / (startOverlap - startOverlapBefore);
    }
    if (endedThisPass) {
      const fraction = forcePrevious > 0 ? forcePrevious / (forcePrevious - forceNow) : 0;
      firstContactEndS = Math.max(firstContactStartS, (n - 1) * h + h * fraction);
      contactDurationS = firstContactEndS - firstContactStartS;
      // field.firstContactEndApproachSpeed (b ≥ 0).
      const endApproach = (vx0 - vx1) * endNormalX + (vy0 - vy1) * endNormalY;
      effectiveRestitution = approachSpeed > 0 ? -endApproach / approachSpeed : null;
    }

    if (!Number.isFinite(energy) || (startEnergy > 0 && energy > blowUpEnergyFactor * startEnergy)) {
      exploded = true;
      explodedAtS = n * h;
      break;
    }
  }

  x[0] = x0; y[0] = y0; vx[0] = vx0; vy[0] = vy0; fx[0] = fx0; fy[0] = fy0; previousX[0] = px0; previousY[0] = py0;
  x[1] = x1; y[1] = y1; vx[1] = vx1; vy[1] = vy1; fx[1] = fx1; fy[1] = fy1; previousX[1] = px1; previousY[1] = py1;
  field.contactPotentialJ = contactPotentialJ;
  field.overlappingContacts = overlappingContacts;
  field.maxOverlapFraction = passMaxOverlapFraction;
  field.maxOverlapM = passMaxOverlapM;
  field.maxOmegaSquared = passMaxOmegaSquared;
  field.tunnelKind = tunnelKind;
  field.tunnelBodyA = tunnelBodyA;
  field.tunnelBodyB = tunnelBodyB;
  field.tunnelDetectedThisPass = tunnelDetectedThisPass;
  field.firstContactPhase = phase;
  field.firstContactA = firstA;
  field.firstContactB = firstB;
  field.firstContactStartedThisPass = startedThisPass;
  field.firstContactEndedThisPass = endedThisPass;
  field.firstContactStartOverlapBeforeM = startOverlapBefore;
  field.firstContactStartOverlapM = startOverlap;
  field.firstContactApproachSpeedMPerS = approachSpeed;
  field.firstContactForcePreviousN = forcePrevious;
  field.firstContactForceN = forceNow;
  field.firstContactEndNormalX = endNormalX;
  field.firstContactEndNormalY = endNormalY;

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
function jumpFreeFlight(bodies: Bodies, from: number, to: number, h: number, recorder: SeriesRecorder | null, gravity: number, replicateRounding: boolean): void {
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

/** Restitution the contact model should give the first contact's pair (1 when undamped). */
function expectedRestitution(field: ContactField, bodies: Bodies, scenario: Scenario): number {
  const damping = scenario.contact.damping;
  if (damping.kind === "restitution") return damping.value;
  if (field.dampingMode === DAMPING_NONE) return 1;
  const a = field.firstContactA;
  const b = field.firstContactB;
  const reducedMass = field.contactReducedMassKg(bodies, a, b);
  const stiffness = field.contactStiffness(bodies, a, b);
  if (field.model === CONTACT_LINEAR) {
    const ratio = field.dampingMode === DAMPING_DIMENSIONLESS ? field.dampingValue : field.dampingValue / (2 * Math.sqrt(reducedMass * stiffness));
    return linearRestitutionForDampingRatio(ratio);
  }
  const beta = field.dampingMode === DAMPING_DIMENSIONLESS ? field.dampingValue : field.dampingValue / Math.sqrt(reducedMass * stiffness);
  return hertzRestitutionEstimate(beta);
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
export function judge(metrics: Metrics, scenario: Scenario, context: VerdictContext): { verdict: Verdict; reason: string } {
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
export function judgeByRules1(metrics: Metrics, scenario: Scenario, context: VerdictContext): { verdict: Verdict; reason: string } {
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
  const undamped = scenario.contact.damping.kind === "none" || (scenario.contact.damping.kind === "coefficient" && scenario.contact.damping.value === 0) || (scenario.contact.damping.kind === "restitution" && scenario.contact.damping.value === 1);
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
export function judgeByRules2(metrics: Metrics, scenario: Scenario, context: VerdictContext): { verdict: Verdict; reason: string } {
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

/**
 * Contacts listed per sample in a friction run's series (the replay's stick/slide marks): enough for
 * a pile of a few dozen bodies; a larger pile lists the first ones in canonical order (the counts
 * stay complete), so a 2,000-sample series stays a few megabytes at most.
 */
export const SERIES_MAX_CONTACTS = 64;

/** Evenly spaced samples over the run's steps, at most `maxSamples`. */
class SeriesRecorder {
  readonly series: TimeSeries;
  private readonly maxSamples: number;
  private readonly totalSteps: number;
  private sampleIndex = 0;
  /** The field of a run with friction (spin and stick/slide are recorded), else null. */
  private readonly frictionField: ContactField | null;

  constructor(bodyCount: number, maxSamples: number, totalSteps: number, frictionField: ContactField | null) {
    this.maxSamples = maxSamples;
    this.totalSteps = totalSteps;
    this.frictionField = frictionField;
    const bodies: TimeSeries["bodies"] = [];
    for (let i = 0; i < bodyCount; i++) bodies.push(frictionField ? { xM: [], yM: [], pxNs: [], pyNs: [], angleRad: [], omegaRadPerS: [] } : { xM: [], yM: [], pxNs: [], pyNs: [] });
    this.series = { tS: [], bodies, totalPxNs: [], totalPyNs: [], kineticJ: [], potentialJ: [], totalJ: [], maxOverlapM: [] };
    if (frictionField) {
      this.series.slidingContacts = [];
      this.series.stickingContacts = [];
      this.series.slipMPerS = [];
      this.series.frictionContacts = [];
    }
  }

  private stepOfSample(index: number): number {
    if (this.maxSamples === 1) return 0;
    return Math.floor((index * this.totalSteps) / (this.maxSamples - 1));
  }

  /** Step of the next sample still to record (Infinity when all are recorded). */
  nextSampleStep(): number {
    return this.sampleIndex < this.maxSamples ? this.stepOfSample(this.sampleIndex) : Infinity;
  }

  /** Records the current state if one or more samples fall on `step` (once, even if several do). */
  recordUpTo(step: number, bodies: Bodies, contactPotentialJ: number, gravity: number, maxOverlapM: number, h: number): void {
    if (this.nextSampleStep() > step) return;
    while (this.nextSampleStep() <= step) this.sampleIndex++;
    const series = this.series;
    series.tS.push(step * h);
    let totalPx = 0;
    let totalPy = 0;
    for (let i = 0; i < bodies.count; i++) {
      const track = series.bodies[i];
      const px = bodies.mass[i] * bodies.vx[i];
      const py = bodies.mass[i] * bodies.vy[i];
      track.xM.push(bodies.x[i]);
      track.yM.push(bodies.y[i]);
      track.pxNs.push(px);
      track.pyNs.push(py);
      if (track.angleRad && track.omegaRadPerS) {
        track.angleRad.push(bodies.angle[i]);
        track.omegaRadPerS.push(bodies.omega[i]);
      }
      totalPx += px;
      totalPy += py;
    }
    series.totalPxNs.push(totalPx);
    series.totalPyNs.push(totalPy);
    const kinetic = kineticEnergyJ(bodies) + rotationalEnergyJ(bodies);
    if (this.frictionField && series.slidingContacts && series.stickingContacts) {
      const tangential = this.frictionField.tangential;
      series.slidingContacts.push(tangential.slidingContacts);
      series.stickingContacts.push(tangential.stickingContacts);
      series.slipMPerS?.push(tangential.maxSlipMPerS);
      const contacts: number[] = [];
      tangential.listContacts(contacts, SERIES_MAX_CONTACTS);
      series.frictionContacts?.push(contacts);
    }
    const potential = contactPotentialJ + gravityPotentialJ(bodies, gravity);
    series.kineticJ.push(kinetic);
    series.potentialJ.push(potential);
    series.totalJ.push(kinetic + potential);
    series.maxOverlapM.push(maxOverlapM);
  }
}
