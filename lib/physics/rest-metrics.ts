/**
 * Metrics of resting contact, gathered in the scenes where bodies should come to rest (slope and
 * stack): settle time, residual motion over the last quarter of the run, creep along the slope in
 * the second half, and the resting overlap at the end against the static overlap of the model.
 */
import type { ContactSpec, Metrics, Scenario, SlopeScene } from "./types";
import type { Bodies } from "./bodies";
import { CONTACT_LINEAR, type ContactField, PASS_MAX_OVERLAP_M } from "./contact-field";
import { SETTLE_ENERGY_FRACTION } from "./constants";
import { slopeGeometry } from "./scenes";
import { slidingAngleDeg } from "./friction-analytic";

export function isRestingScene(scenario: Scenario): boolean {
  return scenario.scene.kind === "slope" || scenario.scene.kind === "stack";
}

/**
 * Whether friction should hold the slope scene's body at rest (the analytic limits): a crate while
 * tan θ ≤ μ_s; a disc only with rolling resistance, while tan θ ≤ μ_r (the resisting torque
 * μ_r·r·F_n against the weight's m·g·sin θ·r about the contact) and tan θ ≤ 3μ_s (no slip).
 */
export function slopeShouldHold(scene: SlopeScene, contact: ContactSpec): boolean {
  if (scene.speedMPerS !== 0 || (scene.body === "disc" && scene.spinRadPerS !== 0)) return false;
  if (scene.angleDeg === 0) return true;
  const staticCoefficient = Math.max(contact.friction?.coefficient ?? 0, contact.friction?.staticCoefficient ?? 0);
  if (scene.body === "crate") return scene.angleDeg <= slidingAngleDeg(staticCoefficient);
  const rolling = contact.rollingResistance ?? 0;
  return scene.angleDeg <= slidingAngleDeg(staticCoefficient, 0.5) && scene.angleDeg <= slidingAngleDeg(rolling);
}

export class RestTracker {
  private readonly thresholdJ: number;
  private readonly halfStep: number;
  private readonly lastQuarterStep: number;
  private lastRestlessStep = 0;
  private everRestless = false;
  private residualSumJ = 0;
  private residualSamples = 0;
  private residualMaxSpeed = 0;
  private slopeAtHalf = NaN;
  private readonly slope: { downX: number; downY: number } | null;

  constructor(
    private readonly scenario: Scenario,
    bodies: Bodies,
    private readonly gravity: number,
    private readonly totalSteps: number,
  ) {
    let reference = 0;
    for (let i = 0; i < bodies.count; i++) reference += bodies.mass[i] * gravity * bodies.radius[i];
    this.thresholdJ = SETTLE_ENERGY_FRACTION * reference;
    this.halfStep = Math.floor(totalSteps / 2);
    this.lastQuarterStep = Math.floor((3 * totalSteps) / 4);
    this.slope = scenario.scene.kind === "slope" ? slopeGeometry(scenario.scene.angleDeg) : null;
  }

  /** After step n (1-based) with the run's kinetic energy including spin. */
  afterStep(n: number, kineticJ: number, bodies: Bodies): void {
    if (kineticJ >= this.thresholdJ) {
      this.lastRestlessStep = n;
      this.everRestless = true;
    }
    if (n === this.halfStep && this.slope) this.slopeAtHalf = bodies.x[0] * this.slope.downX + bodies.y[0] * this.slope.downY;
    if (n > this.lastQuarterStep) {
      this.residualSumJ += kineticJ;
      this.residualSamples++;
      const { count, vx, vy } = bodies;
      for (let i = 0; i < count; i++) {
        const speed = Math.sqrt(vx[i] * vx[i] + vy[i] * vy[i]);
        if (speed > this.residualMaxSpeed) this.residualMaxSpeed = speed;
      }
    }
  }

  finish(metrics: Metrics, bodies: Bodies, field: ContactField, h: number, completed: boolean): void {
    metrics.settleTimeS = !completed || this.lastRestlessStep === this.totalSteps ? null : this.everRestless ? this.lastRestlessStep * h : 0;
    metrics.residualKineticJ = this.residualSamples > 0 ? this.residualSumJ / this.residualSamples : 0;
    metrics.residualMaxSpeedMPerS = this.residualMaxSpeed;
    if (this.slope) {
      const end = bodies.x[0] * this.slope.downX + bodies.y[0] * this.slope.downY;
      metrics.creepM = Number.isNaN(this.slopeAtHalf) ? 0 : Math.abs(end - this.slopeAtHalf);
    }
    const radius = bodies.radius[0];
    metrics.restingOverlapFraction = field.pass[PASS_MAX_OVERLAP_M] / radius;
    // The deepest resting contact: the slope's body on the incline (weight component m·g·cos θ),
    // the stack's bottom disc on the floor (the weight of the whole tower).
    const scene = this.scenario.scene;
    let loadN = 0;
    if (scene.kind === "slope") loadN = scene.massKg * this.gravity * Math.cos((scene.angleDeg * Math.PI) / 180);
    else if (scene.kind === "stack") loadN = scene.count * scene.massKg * this.gravity;
    const stiffness = field.contactStiffness(bodies, 0, -1);
    const expected = loadN > 0 && stiffness > 0 ? (field.model === CONTACT_LINEAR ? loadN / stiffness : Math.pow(loadN / stiffness, 2 / 3)) : 0;
    metrics.restingOverlapRatio = expected > 0 ? field.pass[PASS_MAX_OVERLAP_M] / expected : null;
  }
}
