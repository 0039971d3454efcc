/**
 * One run of a scenario: builds the scene and its contact field, primes the forces, hands the run
 * to a step loop (./step-loop.ts, or ./pair-loop.ts for pair cells), then turns what the loop
 * measured into the metrics (with the spin and rest trackers' parts), the verdict (./verdicts.ts)
 * and the work counts. Pure and deterministic: the same scenario always yields byte-identical
 * metrics (no clocks, no Math.random, no dependence on object iteration order).
 */
import type { Metrics, RunOptions, RunResult, Scenario, WorkCounts } from "./types";
import { MAX_BODIES_FOR_FREE_FLIGHT_JUMPS } from "./constants";
import { buildScene } from "./scenes";
import { GRAVITY_J, KINETIC_J, energyTerms, momentumMagnitudeSumNs, rotationalEnergyJ, totalMomentumXNs, totalMomentumYNs } from "./bodies";
import { SpinTracker, isIsolatedScene } from "./spin-metrics";
import { RestTracker, isRestingScene } from "./rest-metrics";
import { primeForces, stepFunctionFor } from "./integrators";
import { BROAD_PHASE_ALL_PAIRS, BROAD_PHASE_GRID, CONTACT_HERTZ, CONTACT_LINEAR, ContactField, DAMPING_NONE, FIRST_CONTACT_ENDED, PASS_POTENTIAL_J, TUNNEL_NONE } from "./contact-field";
import { contactFieldParameters, expectedRestitution } from "./contact-setup";
import { integrate, type LoopSettings } from "./step-loop";
import { createPairState, integratePair, takesTwoBodyPath } from "./pair-loop";
import { SeriesRecorder } from "./series";
import { judge } from "./verdicts";
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

/** What a caller running many cells lends each run, so the runs allocate neither (see `simulate`). */
export interface RunScratch {
  /** Reconfigured by each run of at most MAX_BODIES_FOR_FREE_FLIGHT_JUMPS bodies. */
  readonly field: ContactField;
  /** The two-body loop's state vector (./pair-loop.ts). */
  readonly pairState: Float64Array;
  /** `energyTerms`' output (kinetic, gravity) for the start energy and the general step loop. */
  readonly energyTerms: Float64Array;
}

/** A scratch for one thread's runs (runs are synchronous: one run uses it at a time). */
export function createRunScratch(): RunScratch {
  const field = new ContactField({
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
  return { field, pairState: createPairState(), energyTerms: new Float64Array(2) };
}

/**
 * Runs one cell. `scratch` (from `createRunScratch`) lends the run a contact field and the two-body
 * loop's state vector to reconfigure instead of allocating them: a caller that runs many cells in
 * a row (a chunk of a sweep) owns one; without it the run allocates its own. Either way the results
 * are the same: a reconfigured field starts from exactly a new one's state.
 */
export function simulate(scenario: Scenario, options: RunOptions = {}, scratch?: RunScratch): RunResult {
  const setup = buildScene(scenario.scene, scenario.seed);
  const bodies = setup.bodies;
  const gravity = setup.gravityMPerS2;
  const parameters = contactFieldParameters(scenario, setup.walls, gravity, bodies.count, options.broadPhase);
  // A large scene's field (its grid buffers sized to the scene) is not kept beyond its run.
  const lend = scratch !== undefined && bodies.count <= MAX_BODIES_FOR_FREE_FLIGHT_JUMPS;
  if (lend) scratch.field.configure(parameters);
  const field = lend ? scratch.field : new ContactField(parameters);
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
  const terms = scratch?.energyTerms ?? new Float64Array(2);
  energyTerms(bodies, gravity, terms);
  const startEnergy = terms[KINETIC_J] + field.pass[PASS_POTENTIAL_J] + terms[GRAVITY_J] + rotationalEnergyJ(bodies);
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
    energyTerms: terms,
  };
  const progress = takesTwoBodyPath(scenario, bodies, field, gravity, recorder) ? integratePair(bodies, field, settings, scratch?.pairState ?? createPairState()) : integrate(bodies, field, step, settings);
  const { n, chargedContacts, flightChecks, flightSteps, finalFlights, integratedSteps, externalImpulseXNs, externalImpulseYNs, energy, maxEnergyErrorRel, maxOverlapFraction, maxOmegaSquared, contactSteps, exploded, explodedAtS, tunnelAtS, effectiveRestitution, contactDurationS } = progress;

  const expected = effectiveRestitution !== null && field.run.firstContactPhase === FIRST_CONTACT_ENDED ? expectedRestitution(field, bodies, scenario) : null;
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
    tunneled: field.run.tunnelKind !== TUNNEL_NONE,
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
    tunnelKind: field.run.tunnelKind,
    tunnelBodyA: field.run.tunnelBodyA,
    tunnelBodyB: field.run.tunnelBodyB,
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
