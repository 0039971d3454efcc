/**
 * Fixed-step integrators over the structure-of-arrays state. Each step assumes `bodies.fx/fy`
 * hold the force at the current state (call `primeForces` once before the first step) and leaves
 * them holding the force at the new state, so every force is evaluated exactly once per step.
 */
import type { IntegratorName } from "./types";
import type { Bodies } from "./bodies";

/** Anything that fills `bodies.fx/fy` from the current positions and velocities. */
export interface ForceField {
  evaluate(bodies: Bodies): void;
}

/** Records the current positions as "previous" and evaluates the forces at the initial state. */
export function primeForces(bodies: Bodies, field: ForceField): void {
  bodies.previousX.set(bodies.x);
  bodies.previousY.set(bodies.y);
  bodies.previousAngle.set(bodies.angle);
  field.evaluate(bodies);
}

/**
 * Symplectic Euler, kick then drift: v_{n+1} = v_n + h·F(x_n, v_n)/m, x_{n+1} = x_n + h·v_{n+1}.
 * The next force is evaluated at (x_{n+1}, v_{n+1}).
 */
export function stepSymplecticEuler(bodies: Bodies, field: ForceField, substepS: number): void {
  const { count, x, y, vx, vy, fx, fy, inverseMass, previousX, previousY } = bodies;
  for (let i = 0; i < count; i++) {
    const kick = substepS * inverseMass[i];
    vx[i] += kick * fx[i];
    vy[i] += kick * fy[i];
    previousX[i] = x[i];
    previousY[i] = y[i];
    x[i] += substepS * vx[i];
    y[i] += substepS * vy[i];
  }
  if (bodies.rotating) {
    // Rotation in the translation's order: kick ω by the torque, then drift θ by the new ω.
    const { angle, omega, torque, inverseInertia, previousAngle } = bodies;
    for (let i = 0; i < count; i++) {
      omega[i] += substepS * inverseInertia[i] * torque[i];
      previousAngle[i] = angle[i];
      angle[i] += substepS * omega[i];
    }
  }
  field.evaluate(bodies);
}

/**
 * Velocity Verlet: half kick, drift, force at the new positions, half kick. Velocity-dependent
 * (damping) forces are evaluated with the predicted velocity v_{n+1/2} + (h/2)·a_n, which keeps
 * the method second order with a dashpot (using v_{n+1/2} alone would make it first order).
 */
export function stepVelocityVerlet(bodies: Bodies, field: ForceField, substepS: number): void {
  const { count, x, y, vx, vy, fx, fy, inverseMass, previousX, previousY, scratchVx, scratchVy } = bodies;
  const halfStep = 0.5 * substepS;
  for (let i = 0; i < count; i++) {
    const kick = halfStep * inverseMass[i];
    const halfVx = vx[i] + kick * fx[i];
    const halfVy = vy[i] + kick * fy[i];
    scratchVx[i] = halfVx;
    scratchVy[i] = halfVy;
    previousX[i] = x[i];
    previousY[i] = y[i];
    x[i] += substepS * halfVx;
    y[i] += substepS * halfVy;
    vx[i] = halfVx + kick * fx[i];
    vy[i] = halfVy + kick * fy[i];
  }
  const rotating = bodies.rotating;
  const { angle, omega, torque, inverseInertia, previousAngle, scratchOmega } = bodies;
  if (rotating) {
    // Rotation in the translation's order: half kick, drift, predicted ω for the dashpot, half kick.
    for (let i = 0; i < count; i++) {
      const kick = halfStep * inverseInertia[i];
      const halfOmega = omega[i] + kick * torque[i];
      scratchOmega[i] = halfOmega;
      previousAngle[i] = angle[i];
      angle[i] += substepS * halfOmega;
      omega[i] = halfOmega + kick * torque[i];
    }
  }
  field.evaluate(bodies);
  for (let i = 0; i < count; i++) {
    const kick = halfStep * inverseMass[i];
    vx[i] = scratchVx[i] + kick * fx[i];
    vy[i] = scratchVy[i] + kick * fy[i];
  }
  if (rotating) {
    for (let i = 0; i < count; i++) omega[i] = scratchOmega[i] + halfStep * inverseInertia[i] * torque[i];
  }
}

/** Explicit (forward) Euler: x_{n+1} = x_n + h·v_n, v_{n+1} = v_n + h·F(x_n, v_n)/m. A cautionary baseline. */
export function stepExplicitEuler(bodies: Bodies, field: ForceField, substepS: number): void {
  const { count, x, y, vx, vy, fx, fy, inverseMass, previousX, previousY } = bodies;
  for (let i = 0; i < count; i++) {
    previousX[i] = x[i];
    previousY[i] = y[i];
    x[i] += substepS * vx[i];
    y[i] += substepS * vy[i];
    const kick = substepS * inverseMass[i];
    vx[i] += kick * fx[i];
    vy[i] += kick * fy[i];
  }
  if (bodies.rotating) {
    // Rotation in the translation's order: drift θ by the old ω, then kick ω.
    const { angle, omega, torque, inverseInertia, previousAngle } = bodies;
    for (let i = 0; i < count; i++) {
      previousAngle[i] = angle[i];
      angle[i] += substepS * omega[i];
      omega[i] += substepS * inverseInertia[i] * torque[i];
    }
  }
  field.evaluate(bodies);
}

export type StepFunction = (bodies: Bodies, field: ForceField, substepS: number) => void;

export function stepFunctionFor(integrator: IntegratorName): StepFunction {
  switch (integrator) {
    case "symplectic-euler":
      return stepSymplecticEuler;
    case "velocity-verlet":
      return stepVelocityVerlet;
    case "explicit-euler":
      return stepExplicitEuler;
  }
}

/** Advances `steps` substeps (forces must be primed). */
export function advance(integrator: IntegratorName, bodies: Bodies, field: ForceField, substepS: number, steps: number): void {
  const step = stepFunctionFor(integrator);
  for (let n = 0; n < steps; n++) step(bodies, field, substepS);
}
