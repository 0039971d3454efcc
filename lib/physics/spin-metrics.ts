/**
 * Metrics of rotation and friction, gathered only in runs that rotate (friction or rolling
 * resistance on): angular momentum drift, the tangential ω·h, sliding, and the rebound of the
 * first contact (slip, spin, angle). Frictionless runs never build this and keep their metrics.
 */
import type { Metrics, Scenario } from "./types";
import { angularMomentumKgM2PerS, type Bodies } from "./bodies";
import type { ContactField } from "./contact-field";

/**
 * Whether a run of this scenario returns the rotation metrics: runs with friction or rolling
 * resistance (the condition lib/physics/simulate.ts turns the tangential contact on by) and the
 * resting scenes, slope and stack (lib/physics/rest-metrics.ts). The result cache uses it to leave
 * alone cells stored before packed format 3, which did not keep these metrics.
 */
export function measuresRotation(scenario: Scenario): boolean {
  const { friction, rollingResistance } = scenario.contact;
  if (scenario.scene.kind === "slope" || scenario.scene.kind === "stack") return true;
  return (friction !== undefined && (friction.coefficient > 0 || (friction.staticCoefficient ?? 0) > 0)) || (rollingResistance ?? 0) > 0;
}

export function isIsolatedScene(scenario: Scenario): boolean {
  return scenario.scene.kind === "pair" || scenario.scene.kind === "wall";
}

/** Torque of gravity (along −y) about the origin: Σ x_i × (0, −m_i·g) = −g·Σ m_i·x_i. */
function gravityTorqueNm(bodies: Bodies, gravity: number): number {
  if (gravity === 0) return 0;
  const { count, x, mass } = bodies;
  let sum = 0;
  for (let i = 0; i < count; i++) sum += mass[i] * x[i];
  return -gravity * sum;
}

export class SpinTracker {
  private startAngularMomentum = 0;
  private angularMomentumScale = 1;
  private externalAngularImpulse = 0;
  private lastExternalTorque = 0;
  private maxTangentialOmegaSquared = 0;
  private slidingSteps = 0;
  private endSlip: number | null = null;
  private reboundSpin: number | null = null;
  private reboundAngleDeg: number | null = null;
  private readonly gravity: number;
  private readonly isolated: boolean;

  constructor(bodies: Bodies, field: ContactField, gravity: number, isolated: boolean) {
    this.gravity = gravity;
    this.isolated = isolated;
  }

  /** After the forces were primed at the initial state. */
  start(bodies: Bodies, field: ContactField): void {
    this.startAngularMomentum = angularMomentumKgM2PerS(bodies);
    let scale = Math.abs(this.startAngularMomentum);
    if (scale === 0) {
      const { count, x, y, vx, vy, mass, inertia, omega } = bodies;
      for (let i = 0; i < count; i++) scale += Math.abs(mass[i] * (x[i] * vy[i] - y[i] * vx[i])) + Math.abs(inertia[i] * omega[i]);
    }
    this.angularMomentumScale = scale > 0 ? scale : 1;
    this.lastExternalTorque = field.tangential.wallTorqueNm + gravityTorqueNm(bodies, this.gravity);
    this.maxTangentialOmegaSquared = field.tangential.maxOmegaSquared;
  }

  /**
   * After each step: the angular impulse of walls and gravity, summed the way each integrator
   * applies forces (velocity Verlet: the trapezoid of the old and new torque; the Euler methods:
   * the torque at the start of the step), so the drift is zero up to rounding when the integrator
   * conserves angular momentum.
   */
  afterStep(bodies: Bodies, field: ContactField, h: number, isVerlet: boolean): void {
    const torque = field.tangential.wallTorqueNm + gravityTorqueNm(bodies, this.gravity);
    this.externalAngularImpulse += isVerlet ? 0.5 * h * (this.lastExternalTorque + torque) : h * this.lastExternalTorque;
    this.lastExternalTorque = torque;
    const tangential = field.tangential;
    if (tangential.maxOmegaSquared > this.maxTangentialOmegaSquared) this.maxTangentialOmegaSquared = tangential.maxOmegaSquared;
    if (tangential.slidingContacts > 0) this.slidingSteps++;
  }

  /** At the end of the first contact: slip at the contact point, spin and rebound angle of its first body. */
  firstContactEnded(bodies: Bodies, field: ContactField): void {
    const a = field.run.firstContactA;
    const b = field.run.firstContactB;
    const normalX = field.run.firstContactEndNormalX;
    const normalY = field.run.firstContactEndNormalY;
    const tangentX = -normalY;
    const tangentY = normalX;
    const { vx, vy, omega, radius } = bodies;
    if (b >= 0) {
      const relativeX = vx[a] - vx[b];
      const relativeY = vy[a] - vy[b];
      this.endSlip = relativeX * tangentX + relativeY * tangentY + omega[a] * radius[a] + omega[b] * radius[b];
      // Separating speed along −n (n from a towards b) and the tangential speed of a relative to b.
      this.reboundAngleDeg = (Math.atan2(relativeX * tangentX + relativeY * tangentY, -(relativeX * normalX + relativeY * normalY)) * 180) / Math.PI;
    } else {
      // Against a wall the normal points into free space; the contact point sits a radius behind the centre.
      this.endSlip = vx[a] * tangentX + vy[a] * tangentY - omega[a] * radius[a];
      this.reboundAngleDeg = (Math.atan2(vx[a] * tangentX + vy[a] * tangentY, vx[a] * normalX + vy[a] * normalY) * 180) / Math.PI;
    }
    this.reboundSpin = omega[a];
  }

  finish(metrics: Metrics, bodies: Bodies, field: ContactField, h: number): void {
    metrics.angularMomentumDriftRel = (angularMomentumKgM2PerS(bodies) - this.startAngularMomentum - this.externalAngularImpulse) / this.angularMomentumScale;
    metrics.maxTangentialOmegaH = this.maxTangentialOmegaSquared > 0 ? Math.sqrt(this.maxTangentialOmegaSquared) * h : null;
    metrics.slidingSteps = this.slidingSteps;
    metrics.endSlipMPerS = this.isolated ? this.endSlip : null;
    metrics.reboundSpinRadPerS = this.isolated ? this.reboundSpin : null;
    metrics.reboundAngleDeg = this.isolated ? this.reboundAngleDeg : null;
    void field;
  }
}
