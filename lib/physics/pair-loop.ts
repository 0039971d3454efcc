/**
 * The two-body loop: pair cells (two discs in free space, a linear normal law, symplectic Euler)
 * stepped with the state in locals instead of the general loop's arrays and force field — the
 * same arithmetic in the same order, so the results are byte-identical
 * (tests/unit/physics/kernel-identity.test.ts, two-body-path.test.ts). Its state lives in a
 * caller-owned vector (`createPairState`), read into locals at the start of each chunk of steps.
 */
import type { Scenario } from "./types";
import type { Bodies } from "./bodies";
import { BROAD_PHASE_ALL_PAIRS, CONTACT_LINEAR, type ContactField, DAMPING_COEFFICIENT, DAMPING_NONE, FIRST_CONTACT_ACTIVE, FIRST_CONTACT_ENDED, FIRST_CONTACT_PENDING, PASS_FIRST_CONTACT_ENDED, PASS_FIRST_CONTACT_STARTED, PASS_MAX_OMEGA_SQUARED, PASS_MAX_OVERLAP_FRACTION, PASS_MAX_OVERLAP_M, PASS_OVERLAPPING_CONTACTS, PASS_POTENTIAL_J, PASS_TUNNEL_DETECTED, PASS_WALL_FORCE_X_N, PASS_WALL_FORCE_Y_N, TUNNEL_CENTRES_CROSSED, TUNNEL_ENTERED_PAST_CLOSEST_APPROACH, TUNNEL_NONE, TUNNEL_SKIPPED_CONTACT } from "./contact-field";
import { jumpFreeFlight, type LoopProgress, type LoopSettings } from "./step-loop";
import type { SeriesRecorder } from "./series";

/** Keys of a contact spec the two-body loop knows; anything else (a tangential law) takes the general path. */
const TWO_BODY_CONTACT_KEYS = new Set(["model", "stiffness", "material", "damping"]);

/**
 * Whether a run may take `integratePair`: two discs, no walls, no gravity, a linear normal law,
 * symplectic Euler, all-pairs broad phase and no series. The contact spec must carry nothing but
 * the normal law: friction/rotation (its own issue) adds tangential parameters and state that this
 * loop does not model, so any extra key sends the run through the general path, which stays the
 * reference for everything.
 */
export function takesTwoBodyPath(scenario: Scenario, bodies: Bodies, field: ContactField, gravity: number, recorder: SeriesRecorder | null): boolean {
  if (bodies.count !== 2 || field.wallCount !== 0 || gravity !== 0 || recorder !== null || field.frictional) return false;
  if (field.model !== CONTACT_LINEAR || field.broadPhase !== BROAD_PHASE_ALL_PAIRS || scenario.integrator !== "symplectic-euler") return false;
  for (const key of Object.keys(scenario.contact)) if (!TWO_BODY_CONTACT_KEYS.has(key)) return false;
  return true;
}

/**
 * Slots of the two-body loop's state vector (`createPairState`): every value `advancePair` carries from
 * one chunk of steps to the next, and the cell's constants. Integers and flags are held exactly.
 */
const P_X0 = 0;
const P_Y0 = 1;
const P_VX0 = 2;
const P_VY0 = 3;
const P_FX0 = 4;
const P_FY0 = 5;
const P_PX0 = 6;
const P_PY0 = 7;
const P_X1 = 8;
const P_Y1 = 9;
const P_VX1 = 10;
const P_VY1 = 11;
const P_FX1 = 12;
const P_FY1 = 13;
const P_PX1 = 14;
const P_PY1 = 15;
const P_CONTACT_POTENTIAL_J = 16;
const P_PASS_MAX_OVERLAP_FRACTION = 17;
const P_PASS_MAX_OVERLAP_M = 18;
const P_PASS_MAX_OMEGA_SQUARED = 19;
const P_START_OVERLAP_BEFORE = 20;
const P_START_OVERLAP = 21;
const P_APPROACH_SPEED = 22;
const P_FORCE_PREVIOUS = 23;
const P_FORCE_NOW = 24;
const P_END_NORMAL_X = 25;
const P_END_NORMAL_Y = 26;
const P_EXTERNAL_IMPULSE_X_NS = 27;
const P_EXTERNAL_IMPULSE_Y_NS = 28;
const P_LAST_WALL_FORCE_X_N = 29;
const P_LAST_WALL_FORCE_Y_N = 30;
const P_ENERGY = 31;
const P_MAX_ENERGY_ERROR_REL = 32;
const P_MAX_OVERLAP_FRACTION = 33;
const P_MAX_OMEGA_SQUARED = 34;
const P_EXPLODED_AT_S = 35;
const P_TUNNEL_AT_S = 36;
const P_FIRST_CONTACT_START_S = 37;
const P_FIRST_CONTACT_END_S = 38;
const P_EFFECTIVE_RESTITUTION = 39;
const P_CONTACT_DURATION_S = 40;
const P_N = 41;
const P_OVERLAPPING_CONTACTS = 42;
const P_TUNNEL_KIND = 43;
const P_TUNNEL_BODY_A = 44;
const P_TUNNEL_BODY_B = 45;
const P_PHASE = 46;
const P_FIRST_A = 47;
const P_FIRST_B = 48;
const P_CHARGED_CONTACTS = 49;
const P_FLIGHT_CHECKS = 50;
const P_FLIGHT_STEPS = 51;
const P_FINAL_FLIGHTS = 52;
const P_INTEGRATED_STEPS = 53;
const P_CONTACT_STEPS = 54;
const P_HAS_RESTITUTION = 55;
const P_HAS_DURATION = 56;
const P_TUNNEL_DETECTED_THIS_PASS = 57;
const P_STARTED_THIS_PASS = 58;
const P_ENDED_THIS_PASS = 59;
const P_EXPLODED = 60;
const P_H = 61;
const P_TOTAL_STEPS = 62;
const P_ALLOW_JUMPS = 63;
const P_CONTACTS_CHARGED_MAX = 64;
const P_GRAVITY = 65;
const P_GRAVITY_IMPULSE_PER_STEP_NS = 66;
const P_START_ENERGY = 67;
const P_ENERGY_SCALE = 68;
const P_BLOW_UP_ENERGY_FACTOR = 69;
const P_M0 = 70;
const P_M1 = 71;
const P_IM0 = 72;
const P_IM1 = 73;
const P_REST_FY0 = 74;
const P_REST_FY1 = 75;
const P_MAX_RADIUS = 76;
const P_CONTACT_DISTANCE = 77;
const P_CONTACT_DISTANCE_SQUARED = 78;
const P_SMALLER_RADIUS = 79;
const P_K = 80;
const P_C = 81;
const P_OMEGA_SQUARED = 82;
const P_NEAR_MISS_DEPTH_FRACTION = 83;
const P_WALL_FORCE_X_N = 84;
const P_WALL_FORCE_Y_N = 85;
const PAIR_STATE_SLOTS = 86;

/** A state vector for `integratePair` (every slot is written before it is read, so one serves any number of runs). */
export function createPairState(): Float64Array {
  return new Float64Array(PAIR_STATE_SLOTS);
}

/**
 * Steps per call of `advancePair`. The loop runs in chunks so that its hot code is a function
 * called many times, compiled with every local as an unboxed double read from the state vector: a single
 * long loop runs in on-stack-replaced code, whose loop values enter untyped and are boxed (a heap
 * allocation per value per step), and that code was thrown away at the end of every cell.
 */
const PAIR_CHUNK_STEPS = 2048;

/**
 * `integrate` for two discs in free space (pair cells): the same arithmetic in the same order as
 * `stepSymplecticEuler` + `ContactField.evaluate`/`pair`/`normalForce` + the step loop's
 * bookkeeping, with the state and every running value in locals (no broad phase, no array or
 * property traffic per step). Results are byte-identical to the general path
 * (tests/unit/physics/kernel-identity.test.ts, two-body-path.test.ts and the fast/plain
 * determinism tests hold it to that); the field and the bodies are written back at the end so
 * `simulate` reads them as before.
 */
export function integratePair(bodies: Bodies, field: ContactField, settings: LoopSettings, state: Float64Array): LoopProgress {
  const { h, totalSteps, allowJumps, contactsChargedMax, gravity, gravityImpulsePerStepNs, startEnergy, energyScale, blowUpEnergyFactor } = settings;
  const { x, y, vx, vy, fx, fy, previousX, previousY, mass, inverseMass, radius } = bodies;
  const s = state;
  const m0 = mass[0];
  const m1 = mass[1];
  const im0 = inverseMass[0];
  const im1 = inverseMass[1];
  const r0 = radius[0];
  const r1 = radius[1];
  let maxRadius = 0;
  if (r0 > maxRadius) maxRadius = r0;
  if (r1 > maxRadius) maxRadius = r1;
  const contactDistance = r0 + r1;
  const reducedMass = 1 / (im0 + im1);
  const k = field.stiffness;
  // dampingCoefficient(reducedMass, k): constant for a linear pair.
  const dampingMode = field.dampingMode;
  s[P_H] = h;
  s[P_TOTAL_STEPS] = totalSteps;
  s[P_ALLOW_JUMPS] = allowJumps ? 1 : 0;
  s[P_CONTACTS_CHARGED_MAX] = contactsChargedMax;
  s[P_GRAVITY] = gravity;
  s[P_GRAVITY_IMPULSE_PER_STEP_NS] = gravityImpulsePerStepNs;
  s[P_START_ENERGY] = startEnergy;
  s[P_ENERGY_SCALE] = energyScale;
  s[P_BLOW_UP_ENERGY_FACTOR] = blowUpEnergyFactor;
  s[P_M0] = m0;
  s[P_M1] = m1;
  s[P_IM0] = im0;
  s[P_IM1] = im1;
  // evaluate(): fy = −m·g, with g = 0 here (kept as the same product so a signed zero stays the same).
  s[P_REST_FY0] = -m0 * gravity;
  s[P_REST_FY1] = -m1 * gravity;
  s[P_MAX_RADIUS] = maxRadius;
  s[P_CONTACT_DISTANCE] = contactDistance;
  s[P_CONTACT_DISTANCE_SQUARED] = contactDistance * contactDistance;
  s[P_SMALLER_RADIUS] = r0 < r1 ? r0 : r1;
  s[P_K] = k;
  s[P_C] = dampingMode === DAMPING_NONE ? 0 : dampingMode === DAMPING_COEFFICIENT ? field.dampingValue : 2 * field.dampingValue * Math.sqrt(reducedMass * k);
  s[P_OMEGA_SQUARED] = k / reducedMass;
  s[P_NEAR_MISS_DEPTH_FRACTION] = field.nearMissDepthFraction;
  s[P_WALL_FORCE_X_N] = 0;
  s[P_WALL_FORCE_Y_N] = 0;

  s[P_X0] = x[0]; s[P_Y0] = y[0]; s[P_VX0] = vx[0]; s[P_VY0] = vy[0]; s[P_FX0] = fx[0]; s[P_FY0] = fy[0]; s[P_PX0] = previousX[0]; s[P_PY0] = previousY[0];
  s[P_X1] = x[1]; s[P_Y1] = y[1]; s[P_VX1] = vx[1]; s[P_VY1] = vy[1]; s[P_FX1] = fx[1]; s[P_FY1] = fy[1]; s[P_PX1] = previousX[1]; s[P_PY1] = previousY[1];

  // Field state after priming.
  s[P_CONTACT_POTENTIAL_J] = field.pass[PASS_POTENTIAL_J];
  s[P_OVERLAPPING_CONTACTS] = field.pass[PASS_OVERLAPPING_CONTACTS];
  s[P_PASS_MAX_OVERLAP_FRACTION] = field.pass[PASS_MAX_OVERLAP_FRACTION];
  s[P_PASS_MAX_OVERLAP_M] = field.pass[PASS_MAX_OVERLAP_M];
  s[P_PASS_MAX_OMEGA_SQUARED] = field.pass[PASS_MAX_OMEGA_SQUARED];
  s[P_TUNNEL_KIND] = field.run.tunnelKind;
  s[P_TUNNEL_BODY_A] = field.run.tunnelBodyA;
  s[P_TUNNEL_BODY_B] = field.run.tunnelBodyB;
  s[P_TUNNEL_DETECTED_THIS_PASS] = field.pass[PASS_TUNNEL_DETECTED];
  s[P_PHASE] = field.run.firstContactPhase;
  s[P_FIRST_A] = field.run.firstContactA;
  s[P_FIRST_B] = field.run.firstContactB;
  s[P_STARTED_THIS_PASS] = field.pass[PASS_FIRST_CONTACT_STARTED];
  s[P_ENDED_THIS_PASS] = field.pass[PASS_FIRST_CONTACT_ENDED];
  s[P_START_OVERLAP_BEFORE] = field.run.firstContactStartOverlapBeforeM;
  s[P_START_OVERLAP] = field.run.firstContactStartOverlapM;
  s[P_APPROACH_SPEED] = field.run.firstContactApproachSpeedMPerS;
  s[P_FORCE_PREVIOUS] = field.run.firstContactForcePreviousN;
  s[P_FORCE_NOW] = field.run.firstContactForceN;
  s[P_END_NORMAL_X] = field.run.firstContactEndNormalX;
  s[P_END_NORMAL_Y] = field.run.firstContactEndNormalY;

  // The step loop's running values.
  s[P_N] = 0;
  s[P_CHARGED_CONTACTS] = 0;
  s[P_FLIGHT_CHECKS] = 0;
  s[P_FLIGHT_STEPS] = 0;
  s[P_FINAL_FLIGHTS] = 0;
  s[P_INTEGRATED_STEPS] = 0;
  s[P_EXTERNAL_IMPULSE_X_NS] = 0;
  s[P_EXTERNAL_IMPULSE_Y_NS] = 0;
  s[P_LAST_WALL_FORCE_X_N] = field.pass[PASS_WALL_FORCE_X_N];
  s[P_LAST_WALL_FORCE_Y_N] = field.pass[PASS_WALL_FORCE_Y_N];
  s[P_ENERGY] = startEnergy;
  s[P_MAX_ENERGY_ERROR_REL] = 0;
  s[P_MAX_OVERLAP_FRACTION] = field.pass[PASS_MAX_OVERLAP_FRACTION];
  s[P_MAX_OMEGA_SQUARED] = field.pass[PASS_MAX_OMEGA_SQUARED];
  s[P_CONTACT_STEPS] = 0;
  s[P_EXPLODED] = 0;
  s[P_EXPLODED_AT_S] = 0;
  s[P_TUNNEL_AT_S] = -1;
  s[P_FIRST_CONTACT_START_S] = 0;
  s[P_FIRST_CONTACT_END_S] = 0;
  s[P_EFFECTIVE_RESTITUTION] = 0;
  s[P_HAS_RESTITUTION] = 0;
  s[P_CONTACT_DURATION_S] = 0;
  s[P_HAS_DURATION] = 0;

  // Plain stepping alternates between the free-flight loop (the pair apart and beyond the cutoff,
  // nearly every step of a pair cell) and the general two-body step (contact, near approach, the
  // end of the first contact); fast stepping jumps free flight instead (`advancePair`).
  while (s[P_N] < totalSteps && s[P_EXPLODED] === 0) {
    if (allowJumps && s[P_OVERLAPPING_CONTACTS] === 0) {
      // The free-flight jump of the step loop (integrate), here rather than in `advancePair` so
      // that its code, never run in plain stepping, cannot invalidate the compiled step loop.
      const n = s[P_N];
      x[0] = s[P_X0]; y[0] = s[P_Y0]; vx[0] = s[P_VX0]; vy[0] = s[P_VY0];
      x[1] = s[P_X1]; y[1] = s[P_Y1]; vx[1] = s[P_VX1]; vy[1] = s[P_VY1];
      const timeToContactS = field.timeToFirstContactS(bodies);
      s[P_FLIGHT_CHECKS] += 1;
      const target = timeToContactS === Infinity ? totalSteps : Math.min(totalSteps, n + Math.floor(timeToContactS / h) - 1);
      if (target > n + 1) {
        jumpFreeFlight(bodies, n, target, h, null, gravity, timeToContactS !== Infinity);
        s[P_X0] = x[0]; s[P_Y0] = y[0]; s[P_X1] = x[1]; s[P_Y1] = y[1];
        if (timeToContactS !== Infinity) s[P_FLIGHT_STEPS] += target - n;
        else s[P_FINAL_FLIGHTS] += 1;
        s[P_N] = target;
        if (target >= totalSteps) break;
      }
    }
    const chunkEnd = s[P_N] + PAIR_CHUNK_STEPS;
    const end = chunkEnd < totalSteps ? chunkEnd : totalSteps;
    if (!allowJumps && s[P_PHASE] !== FIRST_CONTACT_ACTIVE) {
      freePairSteps(s, end);
      if (s[P_EXPLODED] !== 0) {
        s[P_EXPLODED_AT_S] = s[P_N] * h;
        break;
      }
      if (s[P_N] >= end) continue;
    }
    advancePair(s, end, !allowJumps, allowJumps);
  }

  x[0] = s[P_X0]; y[0] = s[P_Y0]; vx[0] = s[P_VX0]; vy[0] = s[P_VY0]; fx[0] = s[P_FX0]; fy[0] = s[P_FY0]; previousX[0] = s[P_PX0]; previousY[0] = s[P_PY0];
  x[1] = s[P_X1]; y[1] = s[P_Y1]; vx[1] = s[P_VX1]; vy[1] = s[P_VY1]; fx[1] = s[P_FX1]; fy[1] = s[P_FY1]; previousX[1] = s[P_PX1]; previousY[1] = s[P_PY1];
  field.pass[PASS_POTENTIAL_J] = s[P_CONTACT_POTENTIAL_J];
  field.pass[PASS_OVERLAPPING_CONTACTS] = s[P_OVERLAPPING_CONTACTS] | 0;
  field.pass[PASS_MAX_OVERLAP_FRACTION] = s[P_PASS_MAX_OVERLAP_FRACTION];
  field.pass[PASS_MAX_OVERLAP_M] = s[P_PASS_MAX_OVERLAP_M];
  field.pass[PASS_MAX_OMEGA_SQUARED] = s[P_PASS_MAX_OMEGA_SQUARED];
  field.run.tunnelKind = s[P_TUNNEL_KIND] | 0;
  field.run.tunnelBodyA = s[P_TUNNEL_BODY_A] | 0;
  field.run.tunnelBodyB = s[P_TUNNEL_BODY_B] | 0;
  field.pass[PASS_TUNNEL_DETECTED] = s[P_TUNNEL_DETECTED_THIS_PASS];
  field.run.firstContactPhase = s[P_PHASE] | 0;
  field.run.firstContactA = s[P_FIRST_A] | 0;
  field.run.firstContactB = s[P_FIRST_B] | 0;
  field.pass[PASS_FIRST_CONTACT_STARTED] = s[P_STARTED_THIS_PASS];
  field.pass[PASS_FIRST_CONTACT_ENDED] = s[P_ENDED_THIS_PASS];
  field.run.firstContactStartOverlapBeforeM = s[P_START_OVERLAP_BEFORE];
  field.run.firstContactStartOverlapM = s[P_START_OVERLAP];
  field.run.firstContactApproachSpeedMPerS = s[P_APPROACH_SPEED];
  field.run.firstContactForcePreviousN = s[P_FORCE_PREVIOUS];
  field.run.firstContactForceN = s[P_FORCE_NOW];
  field.run.firstContactEndNormalX = s[P_END_NORMAL_X];
  field.run.firstContactEndNormalY = s[P_END_NORMAL_Y];

  return {
    n: s[P_N],
    integratedSteps: s[P_INTEGRATED_STEPS],
    chargedContacts: s[P_CHARGED_CONTACTS],
    flightChecks: s[P_FLIGHT_CHECKS],
    flightSteps: s[P_FLIGHT_STEPS],
    finalFlights: s[P_FINAL_FLIGHTS],
    externalImpulseXNs: s[P_EXTERNAL_IMPULSE_X_NS],
    externalImpulseYNs: s[P_EXTERNAL_IMPULSE_Y_NS],
    energy: s[P_ENERGY],
    maxEnergyErrorRel: s[P_MAX_ENERGY_ERROR_REL],
    maxOverlapFraction: s[P_MAX_OVERLAP_FRACTION],
    maxOmegaSquared: s[P_MAX_OMEGA_SQUARED],
    contactSteps: s[P_CONTACT_STEPS],
    exploded: s[P_EXPLODED] !== 0,
    explodedAtS: s[P_EXPLODED_AT_S],
    tunnelAtS: s[P_TUNNEL_AT_S],
    effectiveRestitution: s[P_HAS_RESTITUTION] !== 0 ? s[P_EFFECTIVE_RESTITUTION] : null,
    contactDurationS: s[P_HAS_DURATION] !== 0 ? s[P_CONTACT_DURATION_S] : null,
  };
}

/**
 * One chunk of `integratePair`'s loop: steps from the state in `s` until step `end` (or the run
 * exploded), then stores the state back. A free-flight jump may carry the run past `end`.
 */
function advancePair(s: Float64Array, end: number, returnWhenFar: boolean, returnWhenApart: boolean): void {
  const h = s[P_H];
  const contactsChargedMax = s[P_CONTACTS_CHARGED_MAX];
  const gravityImpulsePerStepNs = s[P_GRAVITY_IMPULSE_PER_STEP_NS];
  const startEnergy = s[P_START_ENERGY];
  const energyScale = s[P_ENERGY_SCALE];
  const blowUpEnergyFactor = s[P_BLOW_UP_ENERGY_FACTOR];
  const m0 = s[P_M0];
  const m1 = s[P_M1];
  const im0 = s[P_IM0];
  const im1 = s[P_IM1];
  const restFy0 = s[P_REST_FY0];
  const restFy1 = s[P_REST_FY1];
  const maxRadius = s[P_MAX_RADIUS];
  const contactDistance = s[P_CONTACT_DISTANCE];
  const contactDistanceSquared = s[P_CONTACT_DISTANCE_SQUARED];
  const smallerRadius = s[P_SMALLER_RADIUS];
  const k = s[P_K];
  const c = s[P_C];
  const omegaSquared = s[P_OMEGA_SQUARED];
  const nearMissDepthFraction = s[P_NEAR_MISS_DEPTH_FRACTION];
  const wallForceXN = s[P_WALL_FORCE_X_N];
  const wallForceYN = s[P_WALL_FORCE_Y_N];
  let x0 = s[P_X0];
  let y0 = s[P_Y0];
  let vx0 = s[P_VX0];
  let vy0 = s[P_VY0];
  let fx0 = s[P_FX0];
  let fy0 = s[P_FY0];
  let px0 = s[P_PX0];
  let py0 = s[P_PY0];
  let x1 = s[P_X1];
  let y1 = s[P_Y1];
  let vx1 = s[P_VX1];
  let vy1 = s[P_VY1];
  let fx1 = s[P_FX1];
  let fy1 = s[P_FY1];
  let px1 = s[P_PX1];
  let py1 = s[P_PY1];
  let contactPotentialJ = s[P_CONTACT_POTENTIAL_J];
  let passMaxOverlapFraction = s[P_PASS_MAX_OVERLAP_FRACTION];
  let passMaxOverlapM = s[P_PASS_MAX_OVERLAP_M];
  let passMaxOmegaSquared = s[P_PASS_MAX_OMEGA_SQUARED];
  let startOverlapBefore = s[P_START_OVERLAP_BEFORE];
  let startOverlap = s[P_START_OVERLAP];
  let approachSpeed = s[P_APPROACH_SPEED];
  let forcePrevious = s[P_FORCE_PREVIOUS];
  let forceNow = s[P_FORCE_NOW];
  let endNormalX = s[P_END_NORMAL_X];
  let endNormalY = s[P_END_NORMAL_Y];
  let externalImpulseXNs = s[P_EXTERNAL_IMPULSE_X_NS];
  let externalImpulseYNs = s[P_EXTERNAL_IMPULSE_Y_NS];
  let lastWallForceXN = s[P_LAST_WALL_FORCE_X_N];
  let lastWallForceYN = s[P_LAST_WALL_FORCE_Y_N];
  let energy = s[P_ENERGY];
  let maxEnergyErrorRel = s[P_MAX_ENERGY_ERROR_REL];
  let maxOverlapFraction = s[P_MAX_OVERLAP_FRACTION];
  let maxOmegaSquared = s[P_MAX_OMEGA_SQUARED];
  let explodedAtS = s[P_EXPLODED_AT_S];
  let tunnelAtS = s[P_TUNNEL_AT_S];
  let firstContactStartS = s[P_FIRST_CONTACT_START_S];
  let firstContactEndS = s[P_FIRST_CONTACT_END_S];
  let effectiveRestitution = s[P_EFFECTIVE_RESTITUTION];
  let contactDurationS = s[P_CONTACT_DURATION_S];
  let n = s[P_N];
  let overlappingContacts = s[P_OVERLAPPING_CONTACTS];
  let tunnelKind = s[P_TUNNEL_KIND];
  let tunnelBodyA = s[P_TUNNEL_BODY_A];
  let tunnelBodyB = s[P_TUNNEL_BODY_B];
  let phase = s[P_PHASE];
  let firstA = s[P_FIRST_A];
  let firstB = s[P_FIRST_B];
  let chargedContacts = s[P_CHARGED_CONTACTS];
  let integratedSteps = s[P_INTEGRATED_STEPS];
  let contactSteps = s[P_CONTACT_STEPS];
  let hasRestitution = s[P_HAS_RESTITUTION];
  let hasDuration = s[P_HAS_DURATION];
  let tunnelDetectedThisPass = s[P_TUNNEL_DETECTED_THIS_PASS] !== 0;
  let startedThisPass = s[P_STARTED_THIS_PASS] !== 0;
  let endedThisPass = s[P_ENDED_THIS_PASS] !== 0;
  let exploded = s[P_EXPLODED] !== 0;

  while (n < end) {
    // Whether this step ended with the pair apart and beyond the cutoff (`freePairSteps`' case).
    let far = false;
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
      far = !(distanceSquared < cutoffSquared);
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
      hasDuration = 1;
      // field.firstContactEndApproachSpeed (b ≥ 0).
      const endApproach = (vx0 - vx1) * endNormalX + (vy0 - vy1) * endNormalY;
      if (approachSpeed > 0) {
        effectiveRestitution = -endApproach / approachSpeed;
        hasRestitution = 1;
      } else {
        effectiveRestitution = 0;
        hasRestitution = 0;
      }
    }

    if (!Number.isFinite(energy) || (startEnergy > 0 && energy > blowUpEnergyFactor * startEnergy)) {
      exploded = true;
      explodedAtS = n * h;
      break;
    }
    // Both tests run in either stepping mode, so that neither mode meets a comparison the compiled
    // loop has never seen (which would throw the compiled code away).
    // A first contact still open is closed by the general step (endFirstContactWithoutOverlap).
    const free = far && phase !== FIRST_CONTACT_ACTIVE;
    const apart = overlappingContacts === 0;
    if (returnWhenFar && free) break;
    // Fast stepping: the caller looks for a free-flight jump before the next step.
    if (returnWhenApart && apart) break;
  }

  s[P_X0] = x0;
  s[P_Y0] = y0;
  s[P_VX0] = vx0;
  s[P_VY0] = vy0;
  s[P_FX0] = fx0;
  s[P_FY0] = fy0;
  s[P_PX0] = px0;
  s[P_PY0] = py0;
  s[P_X1] = x1;
  s[P_Y1] = y1;
  s[P_VX1] = vx1;
  s[P_VY1] = vy1;
  s[P_FX1] = fx1;
  s[P_FY1] = fy1;
  s[P_PX1] = px1;
  s[P_PY1] = py1;
  s[P_CONTACT_POTENTIAL_J] = contactPotentialJ;
  s[P_PASS_MAX_OVERLAP_FRACTION] = passMaxOverlapFraction;
  s[P_PASS_MAX_OVERLAP_M] = passMaxOverlapM;
  s[P_PASS_MAX_OMEGA_SQUARED] = passMaxOmegaSquared;
  s[P_START_OVERLAP_BEFORE] = startOverlapBefore;
  s[P_START_OVERLAP] = startOverlap;
  s[P_APPROACH_SPEED] = approachSpeed;
  s[P_FORCE_PREVIOUS] = forcePrevious;
  s[P_FORCE_NOW] = forceNow;
  s[P_END_NORMAL_X] = endNormalX;
  s[P_END_NORMAL_Y] = endNormalY;
  s[P_EXTERNAL_IMPULSE_X_NS] = externalImpulseXNs;
  s[P_EXTERNAL_IMPULSE_Y_NS] = externalImpulseYNs;
  s[P_LAST_WALL_FORCE_X_N] = lastWallForceXN;
  s[P_LAST_WALL_FORCE_Y_N] = lastWallForceYN;
  s[P_ENERGY] = energy;
  s[P_MAX_ENERGY_ERROR_REL] = maxEnergyErrorRel;
  s[P_MAX_OVERLAP_FRACTION] = maxOverlapFraction;
  s[P_MAX_OMEGA_SQUARED] = maxOmegaSquared;
  s[P_EXPLODED_AT_S] = explodedAtS;
  s[P_TUNNEL_AT_S] = tunnelAtS;
  s[P_FIRST_CONTACT_START_S] = firstContactStartS;
  s[P_FIRST_CONTACT_END_S] = firstContactEndS;
  s[P_EFFECTIVE_RESTITUTION] = effectiveRestitution;
  s[P_CONTACT_DURATION_S] = contactDurationS;
  s[P_N] = n;
  s[P_OVERLAPPING_CONTACTS] = overlappingContacts;
  s[P_TUNNEL_KIND] = tunnelKind;
  s[P_TUNNEL_BODY_A] = tunnelBodyA;
  s[P_TUNNEL_BODY_B] = tunnelBodyB;
  s[P_PHASE] = phase;
  s[P_FIRST_A] = firstA;
  s[P_FIRST_B] = firstB;
  s[P_CHARGED_CONTACTS] = chargedContacts;
  s[P_INTEGRATED_STEPS] = integratedSteps;
  s[P_CONTACT_STEPS] = contactSteps;
  s[P_HAS_RESTITUTION] = hasRestitution;
  s[P_HAS_DURATION] = hasDuration;
  s[P_TUNNEL_DETECTED_THIS_PASS] = tunnelDetectedThisPass ? 1 : 0;
  s[P_STARTED_THIS_PASS] = startedThisPass ? 1 : 0;
  s[P_ENDED_THIS_PASS] = endedThisPass ? 1 : 0;
  s[P_EXPLODED] = exploded ? 1 : 0;
}

/**
 * Plain-stepping free flight of the two-body loop: steps while the pair stays apart and beyond the
 * cutoff after the drift, where a step does nothing but kick, drift, reset the forces and book
 * the step. Each step's new state is computed first by exactly `advancePair`'s arithmetic and kept
 * only if the pair is still far; otherwise the loop returns with that step not taken, and
 * `advancePair` takes it. What cannot change here is not recomputed: the pass maxima are 0 and
 * the running maxima are ≥ 0, no contact, tunnel or first-contact event can occur. Carries no
 * rarely taken arithmetic, so its compiled code is never thrown away mid-run. The slot loads and
 * per-step bookkeeping it shares with `advancePair` stay written out: they fill 7–20 locals each
 * step, and sharing them would cost a store and a load per value in the pair grid's hottest loop.
 */
function freePairSteps(s: Float64Array, end: number): void {
  const h = s[P_H];
  const contactsChargedMax = s[P_CONTACTS_CHARGED_MAX];
  const gravityImpulsePerStepNs = s[P_GRAVITY_IMPULSE_PER_STEP_NS];
  const startEnergy = s[P_START_ENERGY];
  const energyScale = s[P_ENERGY_SCALE];
  const blowUpEnergyFactor = s[P_BLOW_UP_ENERGY_FACTOR];
  const m0 = s[P_M0];
  const m1 = s[P_M1];
  const im0 = s[P_IM0];
  const im1 = s[P_IM1];
  const restFy0 = s[P_REST_FY0];
  const restFy1 = s[P_REST_FY1];
  const maxRadius = s[P_MAX_RADIUS];
  const contactDistanceSquared = s[P_CONTACT_DISTANCE_SQUARED];
  const wallForceXN = s[P_WALL_FORCE_X_N];
  const wallForceYN = s[P_WALL_FORCE_Y_N];
  let x0 = s[P_X0], y0 = s[P_Y0], vx0 = s[P_VX0], vy0 = s[P_VY0], fx0 = s[P_FX0], fy0 = s[P_FY0], px0 = s[P_PX0], py0 = s[P_PY0];
  let x1 = s[P_X1], y1 = s[P_Y1], vx1 = s[P_VX1], vy1 = s[P_VY1], fx1 = s[P_FX1], fy1 = s[P_FY1], px1 = s[P_PX1], py1 = s[P_PY1];
  let n = s[P_N];
  const startN = n;
  let integratedSteps = s[P_INTEGRATED_STEPS];
  let chargedContacts = s[P_CHARGED_CONTACTS];
  let externalImpulseXNs = s[P_EXTERNAL_IMPULSE_X_NS];
  let externalImpulseYNs = s[P_EXTERNAL_IMPULSE_Y_NS];
  let lastWallForceXN = s[P_LAST_WALL_FORCE_X_N];
  let lastWallForceYN = s[P_LAST_WALL_FORCE_Y_N];
  let energy = s[P_ENERGY];
  let maxEnergyErrorRel = s[P_MAX_ENERGY_ERROR_REL];
  let exploded = false;

  while (n < end) {
    // stepSymplecticEuler into temporaries (kick, drift), as in advancePair.
    const kick0 = h * im0;
    const nextVx0 = vx0 + kick0 * fx0;
    const nextVy0 = vy0 + kick0 * fy0;
    const nextX0 = x0 + h * nextVx0;
    const nextY0 = y0 + h * nextVy0;
    const kick1 = h * im1;
    const nextVx1 = vx1 + kick1 * fx1;
    const nextVy1 = vy1 + kick1 * fy1;
    const nextX1 = x1 + h * nextVx1;
    const nextY1 = y1 + h * nextVy1;
    const dx = nextX1 - nextX0;
    const dy = nextY1 - nextY0;
    const distanceSquared = dx * dx + dy * dy;
    // In contact (or a non-finite distance, which the general step treats as a contact): not free.
    if (!(distanceSquared >= contactDistanceSquared)) break;
    const driftX0 = nextX0 - x0;
    const driftY0 = nextY0 - y0;
    const drift0 = driftX0 * driftX0 + driftY0 * driftY0;
    const driftX1 = nextX1 - x1;
    const driftY1 = nextY1 - y1;
    const drift1 = driftX1 * driftX1 + driftY1 * driftY1;
    let maxDisplacementSquared = 0;
    if (drift0 > maxDisplacementSquared) maxDisplacementSquared = drift0;
    if (drift1 > maxDisplacementSquared) maxDisplacementSquared = drift1;
    const cutoffM = 2 * maxRadius + 2 * Math.sqrt(maxDisplacementSquared);
    // Within the cutoff the general step looks for a contact skipped within the step.
    if (distanceSquared < cutoffM * cutoffM) break;

    vx0 = nextVx0;
    vy0 = nextVy0;
    px0 = x0;
    py0 = y0;
    x0 = nextX0;
    y0 = nextY0;
    vx1 = nextVx1;
    vy1 = nextVy1;
    px1 = x1;
    py1 = y1;
    x1 = nextX1;
    y1 = nextY1;
    fx0 = 0;
    fy0 = restFy0;
    fx1 = 0;
    fy1 = restFy1;

    n++;
    integratedSteps++;
    chargedContacts += 0 < contactsChargedMax ? 0 : contactsChargedMax;
    externalImpulseXNs += h * lastWallForceXN;
    externalImpulseYNs += h * lastWallForceYN;
    externalImpulseYNs += gravityImpulsePerStepNs;
    lastWallForceXN = wallForceXN;
    lastWallForceYN = wallForceYN;
    let kinetic = 0;
    kinetic += 0.5 * m0 * (vx0 * vx0 + vy0 * vy0);
    kinetic += 0.5 * m1 * (vx1 * vx1 + vy1 * vy1);
    energy = kinetic + 0 + 0;
    const energyErrorRel = (energy - startEnergy) / energyScale;
    if (energyErrorRel > maxEnergyErrorRel) maxEnergyErrorRel = energyErrorRel;
    if (!Number.isFinite(energy) || (startEnergy > 0 && energy > blowUpEnergyFactor * startEnergy)) {
      exploded = true;
      break;
    }

    // Coasting: with no force the kicks add ±0, so the velocities keep their magnitudes and every
    // following free step has this step's kinetic energy, energy error and explosion check; the
    // impulse sums add ±0 to a value that is not −0, and the charged contacts add 0. Those steps
    // then only kick, drift and test the distance. The cutoff needs no square root: correctly
    // rounded operations are monotone, so while both drifts stay ≤ coastDrift the step's
    // cutoff² is ≤ coastCutoffSquared, and a distance² at or beyond that is beyond the cutoff.
    // Any step that fails a test is left to the exact step above.
    const kickX0 = kick0 * fx0;
    const kickY0 = kick0 * fy0;
    const kickX1 = kick1 * fx1;
    const kickY1 = kick1 * fy1;
    const coastDrift = maxDisplacementSquared * (1 + 1e-6);
    const coastCutoffM = 2 * maxRadius + 2 * Math.sqrt(coastDrift);
    const coastCutoffSquared = coastCutoffM * coastCutoffM;
    if (
      kickX0 === 0 && kickY0 === 0 && kickX1 === 0 && kickY1 === 0 &&
      h * lastWallForceXN === 0 && h * lastWallForceYN === 0 && gravityImpulsePerStepNs === 0 &&
      !isNegativeZero(externalImpulseXNs) && !isNegativeZero(externalImpulseYNs) &&
      (0 < contactsChargedMax ? 0 : contactsChargedMax) === 0 && !isNegativeZero(chargedContacts)
    ) {
      const coastFrom = n;
      while (n < end) {
        const coastVx0 = vx0 + kickX0;
        const coastVy0 = vy0 + kickY0;
        const coastX0 = x0 + h * coastVx0;
        const coastY0 = y0 + h * coastVy0;
        const coastVx1 = vx1 + kickX1;
        const coastVy1 = vy1 + kickY1;
        const coastX1 = x1 + h * coastVx1;
        const coastY1 = y1 + h * coastVy1;
        const coastDx = coastX1 - coastX0;
        const coastDy = coastY1 - coastY0;
        const coastDistanceSquared = coastDx * coastDx + coastDy * coastDy;
        const coastDriftX0 = coastX0 - x0;
        const coastDriftY0 = coastY0 - y0;
        const coastDriftX1 = coastX1 - x1;
        const coastDriftY1 = coastY1 - y1;
        if (
          !(
            coastDistanceSquared >= contactDistanceSquared &&
            coastDriftX0 * coastDriftX0 + coastDriftY0 * coastDriftY0 <= coastDrift &&
            coastDriftX1 * coastDriftX1 + coastDriftY1 * coastDriftY1 <= coastDrift &&
            coastDistanceSquared >= coastCutoffSquared
          )
        ) {
          break;
        }
        vx0 = coastVx0;
        vy0 = coastVy0;
        px0 = x0;
        py0 = y0;
        x0 = coastX0;
        y0 = coastY0;
        vx1 = coastVx1;
        vy1 = coastVy1;
        px1 = x1;
        py1 = y1;
        x1 = coastX1;
        y1 = coastY1;
        n++;
      }
      integratedSteps += n - coastFrom;
    }
  }

  if (n === startN) return;
  s[P_X0] = x0; s[P_Y0] = y0; s[P_VX0] = vx0; s[P_VY0] = vy0; s[P_FX0] = fx0; s[P_FY0] = fy0; s[P_PX0] = px0; s[P_PY0] = py0;
  s[P_X1] = x1; s[P_Y1] = y1; s[P_VX1] = vx1; s[P_VY1] = vy1; s[P_FX1] = fx1; s[P_FY1] = fy1; s[P_PX1] = px1; s[P_PY1] = py1;
  s[P_N] = n;
  s[P_INTEGRATED_STEPS] = integratedSteps;
  s[P_CHARGED_CONTACTS] = chargedContacts;
  s[P_EXTERNAL_IMPULSE_X_NS] = externalImpulseXNs;
  s[P_EXTERNAL_IMPULSE_Y_NS] = externalImpulseYNs;
  s[P_LAST_WALL_FORCE_X_N] = lastWallForceXN;
  s[P_LAST_WALL_FORCE_Y_N] = lastWallForceYN;
  s[P_ENERGY] = energy;
  s[P_MAX_ENERGY_ERROR_REL] = maxEnergyErrorRel;
  // The field's pass values after a free step (ContactField.evaluate's resets; nothing overlapped).
  s[P_CONTACT_POTENTIAL_J] = 0;
  s[P_OVERLAPPING_CONTACTS] = 0;
  s[P_PASS_MAX_OVERLAP_FRACTION] = 0;
  s[P_PASS_MAX_OVERLAP_M] = 0;
  s[P_PASS_MAX_OMEGA_SQUARED] = 0;
  s[P_TUNNEL_DETECTED_THIS_PASS] = 0;
  s[P_STARTED_THIS_PASS] = 0;
  s[P_ENDED_THIS_PASS] = 0;
  // The caller sets the time of the blow-up (no rarely run arithmetic here).
  if (exploded) s[P_EXPLODED] = 1;
}

/** Whether a number is −0 (adding +0 or −0 to anything else leaves it unchanged). */
function isNegativeZero(value: number): boolean {
  return value === 0 && 1 / value < 0;
}
