/**
 * Structure-of-arrays state of the discs. Every array has one slot per body; units are SI:
 * positions m, velocities m/s, forces N, masses kg, radii m.
 */
export interface Bodies {
  readonly count: number;
  readonly x: Float64Array;
  readonly y: Float64Array;
  readonly vx: Float64Array;
  readonly vy: Float64Array;
  /** Force on each body from the last force evaluation. */
  readonly fx: Float64Array;
  readonly fy: Float64Array;
  readonly mass: Float64Array;
  readonly inverseMass: Float64Array;
  readonly radius: Float64Array;
  /** Positions before the last drift; the contact pass compares them with the current ones to detect tunnelling. */
  readonly previousX: Float64Array;
  readonly previousY: Float64Array;
  /** Integrator scratch (velocity Verlet keeps the half-step velocity here). */
  readonly scratchVx: Float64Array;
  readonly scratchVy: Float64Array;
  /**
   * Rotation (used only while `rotating`: a run with friction or rolling resistance). Angle rad,
   * angular velocity rad/s (counter-clockwise positive), torque N·m, moment of inertia kg·m².
   */
  readonly angle: Float64Array;
  readonly omega: Float64Array;
  readonly torque: Float64Array;
  readonly inertia: Float64Array;
  readonly inverseInertia: Float64Array;
  /** Angles before the last drift; the tangential law takes the step's rotation from them. */
  readonly previousAngle: Float64Array;
  /** Integrator scratch for the half-step angular velocity (velocity Verlet). */
  readonly scratchOmega: Float64Array;
  /**
   * Whether the integrators advance the rotation. False for frictionless runs, whose translational
   * arithmetic then stays exactly what it was before rotation existed.
   */
  rotating: boolean;
}

export function createBodies(count: number): Bodies {
  return {
    count,
    x: new Float64Array(count),
    y: new Float64Array(count),
    vx: new Float64Array(count),
    vy: new Float64Array(count),
    fx: new Float64Array(count),
    fy: new Float64Array(count),
    mass: new Float64Array(count),
    inverseMass: new Float64Array(count),
    radius: new Float64Array(count),
    previousX: new Float64Array(count),
    previousY: new Float64Array(count),
    scratchVx: new Float64Array(count),
    scratchVy: new Float64Array(count),
    angle: new Float64Array(count),
    omega: new Float64Array(count),
    torque: new Float64Array(count),
    inertia: new Float64Array(count),
    inverseInertia: new Float64Array(count),
    previousAngle: new Float64Array(count),
    scratchOmega: new Float64Array(count),
    rotating: false,
  };
}

/** Largest body count whose state arrays are kept for reuse between runs. */
const MAX_REUSED_BODY_COUNT = 64;
const reusedBodies: (Bodies | undefined)[] = [];

/**
 * State arrays for `count` bodies, reused across runs for small scenes (a sweep runs many
 * thousands of two-body cells; allocating a dozen typed arrays each time would dominate).
 * Safe because a run is synchronous and never hands the arrays out; every slot a run reads is
 * written first (`setBody` for the state, the force pass for forces, the integrator for scratch).
 */
export function reusableBodies(count: number): Bodies {
  if (count > MAX_REUSED_BODY_COUNT) return createBodies(count);
  let bodies = reusedBodies[count];
  if (bodies === undefined) {
    bodies = createBodies(count);
    reusedBodies[count] = bodies;
  }
  bodies.rotating = false;
  return bodies;
}

/** Sets one body; the inverse mass is derived here so it is never out of date. */
export function setBody(bodies: Bodies, index: number, xM: number, yM: number, vxMPerS: number, vyMPerS: number, massKg: number, radiusM: number): void {
  bodies.x[index] = xM;
  bodies.y[index] = yM;
  bodies.vx[index] = vxMPerS;
  bodies.vy[index] = vyMPerS;
  bodies.mass[index] = massKg;
  bodies.inverseMass[index] = 1 / massKg;
  bodies.radius[index] = radiusM;
  bodies.previousX[index] = xM;
  bodies.previousY[index] = yM;
  // A solid disc (I = ½·m·r²) at rest in rotation; setSpin and setInertia override.
  const inertia = 0.5 * massKg * radiusM * radiusM;
  bodies.inertia[index] = inertia;
  bodies.inverseInertia[index] = 1 / inertia;
  bodies.angle[index] = 0;
  bodies.previousAngle[index] = 0;
  bodies.omega[index] = 0;
  bodies.torque[index] = 0;
}

/** Initial angular velocity (rad/s, counter-clockwise positive) of one body. */
export function setSpin(bodies: Bodies, index: number, omegaRadPerS: number): void {
  bodies.omega[index] = omegaRadPerS;
}

/** A moment of inertia other than the solid disc's (a ring m·r², a shell); Infinity holds the rotation (a crate). */
export function setInertia(bodies: Bodies, index: number, inertiaKgM2: number): void {
  bodies.inertia[index] = inertiaKgM2;
  bodies.inverseInertia[index] = 1 / inertiaKgM2;
}

/** Rotational kinetic energy Σ ½·I·ω². */
export function rotationalEnergyJ(bodies: Bodies): number {
  if (!bodies.rotating) return 0;
  const { count, omega, inertia } = bodies;
  let sum = 0;
  // A body with its rotation held (inverse inertia 0) never spins and carries no rotational energy.
  for (let i = 0; i < count; i++) if (omega[i] !== 0) sum += 0.5 * inertia[i] * omega[i] * omega[i];
  return sum;
}

/** Angular momentum about the origin Σ (x·m·v_y − y·m·v_x + I·ω) (kg·m²/s). */
export function angularMomentumKgM2PerS(bodies: Bodies): number {
  const { count, x, y, vx, vy, mass, omega, inertia } = bodies;
  let sum = 0;
  for (let i = 0; i < count; i++) sum += mass[i] * (x[i] * vy[i] - y[i] * vx[i]) + (omega[i] !== 0 ? inertia[i] * omega[i] : 0);
  return sum;
}

/** Slot of `energyTerms`' output holding the translational kinetic energy Σ ½·m·|v|² (J). */
export const KINETIC_J = 0;
/** Slot of `energyTerms`' output holding the gravitational potential Σ m·g·y (J; y from the line y = 0, the box floor). */
export const GRAVITY_J = 1;

/**
 * The translational kinetic energy and the gravitational potential in one pass over the bodies,
 * written to `out[KINETIC_J]` and `out[GRAVITY_J]` (a caller-owned pair, so nothing is allocated
 * per step). Each sum is accumulated alone, body by body in index order, exactly as two separate
 * passes would: the values are bit-identical to them.
 */
export function energyTerms(bodies: Bodies, gravityMPerS2: number, out: Float64Array): void {
  const { count, y, vx, vy, mass } = bodies;
  let kinetic = 0;
  let gravity = 0;
  if (gravityMPerS2 === 0) {
    for (let i = 0; i < count; i++) kinetic += 0.5 * mass[i] * (vx[i] * vx[i] + vy[i] * vy[i]);
  } else {
    for (let i = 0; i < count; i++) {
      kinetic += 0.5 * mass[i] * (vx[i] * vx[i] + vy[i] * vy[i]);
      gravity += mass[i] * gravityMPerS2 * y[i];
    }
  }
  out[KINETIC_J] = kinetic;
  out[GRAVITY_J] = gravity;
}

export function totalMomentumXNs(bodies: Bodies): number {
  let sum = 0;
  for (let i = 0; i < bodies.count; i++) sum += bodies.mass[i] * bodies.vx[i];
  return sum;
}

export function totalMomentumYNs(bodies: Bodies): number {
  let sum = 0;
  for (let i = 0; i < bodies.count; i++) sum += bodies.mass[i] * bodies.vy[i];
  return sum;
}

/** Σ m|v|, the momentum scale used when the total momentum is zero. */
export function momentumMagnitudeSumNs(bodies: Bodies): number {
  let sum = 0;
  for (let i = 0; i < bodies.count; i++) sum += bodies.mass[i] * Math.hypot(bodies.vx[i], bodies.vy[i]);
  return sum;
}
