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
}

export function kineticEnergyJ(bodies: Bodies): number {
  const { count, vx, vy, mass } = bodies;
  let sum = 0;
  for (let i = 0; i < count; i++) sum += 0.5 * mass[i] * (vx[i] * vx[i] + vy[i] * vy[i]);
  return sum;
}

/** Gravitational potential m·g·y (y measured from the line y = 0, the box floor). */
export function gravityPotentialJ(bodies: Bodies, gravityMPerS2: number): number {
  if (gravityMPerS2 === 0) return 0;
  const { count, y, mass } = bodies;
  let sum = 0;
  for (let i = 0; i < count; i++) sum += mass[i] * gravityMPerS2 * y[i];
  return sum;
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
