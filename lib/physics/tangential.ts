/**
 * Tangential contact (friction) and rolling resistance between discs and against static walls.
 *
 * Tangential law: the linear spring and dashpot of Cundall & Strack 1979 (Géotechnique 29, "A
 * discrete numerical model for granular assemblies") with Coulomb's cap. Each contact keeps the
 * spring's elongation ξ along its current tangent, accumulated from the relative tangential
 * displacement of the contact points over each step (translation plus r·Δθ). In two dimensions
 * the tangent plane is a line, so keeping ξ as a scalar along the current tangent is the rotation
 * of the spring into the new tangent plane. The trial force F_t = −k_t·ξ − c_t·v_t is capped at
 * μ·F_n (F_n the clamped normal force); a capped contact slides, and its spring is reset to the
 * limit (ξ = −F_t/k_t), as in Luding 2008 (Eur. J. Environ. Civ. Eng. 12, "Introduction to
 * discrete element methods", §2.3). With a static coefficient μ_s above μ, a sticking contact
 * starts to slide at μ_s·F_n and slides at μ·F_n.
 *
 * Lever arms: a pair's contact point divides the centre distance d in the ratio of the radii
 * (l_i = d·r_i/(r_i + r_j)), so the two lever arms add up to d and the tangential forces form no
 * couple of their own: angular momentum is conserved to rounding. Against a wall the lever arm is
 * the distance from the centre to the wall line.
 *
 * Rolling resistance (optional): the constant directional torque of Ai, Chen, Rotter & Ooi 2011
 * (Powder Technology 206, "Assessment of rolling resistance models in discrete element
 * simulations", model A): M_r = −μ_r·R_r·F_n·sign(ω_rel), ω_rel = ω_i − ω_j (a wall: ω_i), R_r the
 * effective radius. The paper notes this model keeps a resting body rocking by one step's torque;
 * the jitter metrics show that.
 *
 * Per-contact history lives in flat typed arrays in the canonical contact order (pairs by i
 * ascending then j ascending, then disc–wall contacts by disc then wall), which is the order the
 * contact field visits contacts in. Each pass writes the contacts it sees into a fresh list and
 * finds each contact's history in the previous pass's list by advancing one cursor (a merge of
 * two sorted lists): no hashing, no objects, and the same history on every thread and chunking.
 * A contact that is not seen in a pass (the bodies separated) is dropped.
 */
import type { Bodies } from "./bodies";

export interface TangentialParameters {
  /** Dynamic (sliding) friction coefficient μ ≥ 0. */
  coefficient: number;
  /** Static coefficient μ_s ≥ μ (equal to μ when not given). */
  staticCoefficient: number;
  /** k_t as a multiple of the contact's current normal stiffness (k, or dF/dδ for Hertz); used when `stiffnessNPerM` is 0. */
  stiffnessRatio: number;
  /** Given k_t (N/m); 0: from the ratio. */
  stiffnessNPerM: number;
  /** Tangential damping ratio ζ_t: c_t = 2·ζ_t·√(m_t·k_t), m_t the effective tangential mass. */
  dampingRatio: number;
  /** Rolling resistance coefficient μ_r (dimensionless, a lever arm in radii); 0 for none. */
  rollingResistance: number;
}

export const NO_TANGENTIAL: Readonly<TangentialParameters> = Object.freeze({
  coefficient: 0,
  staticCoefficient: 0,
  stiffnessRatio: 0,
  stiffnessNPerM: 0,
  dampingRatio: 0,
  rollingResistance: 0,
});

/** Whether the parameters make any tangential force or rolling torque (else the engine skips rotation entirely). */
export function tangentialActive(parameters: TangentialParameters): boolean {
  return parameters.coefficient > 0 || parameters.staticCoefficient > 0 || parameters.rollingResistance > 0;
}

const INITIAL_CAPACITY = 16;

export class TangentialContacts {
  coefficient = 0;
  staticCoefficient = 0;
  stiffnessRatio = 0;
  stiffnessNPerM = 0;
  dampingRatio = 0;
  rollingResistance = 0;

  // Results of the last pass.
  /** Largest k_t/m_t (1/s²) of any contact this pass. */
  maxOmegaSquared = 0;
  slidingContacts = 0;
  stickingContacts = 0;
  /** Largest |slip velocity| (m/s) at a sliding contact this pass. */
  maxSlipMPerS = 0;
  /** Energy held in the tangential springs, Σ ½·k_t·ξ² (J). */
  springPotentialJ = 0;
  /** Torque about the origin (N·m) of every wall force this pass, normal and tangential, with the walls' rolling torques. */
  wallTorqueNm = 0;

  // History lists: the previous pass's (read) and the current pass's (written).
  private previousA: Int32Array = new Int32Array(INITIAL_CAPACITY);
  private previousB: Int32Array = new Int32Array(INITIAL_CAPACITY);
  private previousSpring: Float64Array = new Float64Array(INITIAL_CAPACITY);
  private previousSliding: Uint8Array = new Uint8Array(INITIAL_CAPACITY);
  private previousCount = 0;
  private currentA: Int32Array = new Int32Array(INITIAL_CAPACITY);
  private currentB: Int32Array = new Int32Array(INITIAL_CAPACITY);
  private currentSpring: Float64Array = new Float64Array(INITIAL_CAPACITY);
  private currentSliding: Uint8Array = new Uint8Array(INITIAL_CAPACITY);
  private currentCount = 0;
  private cursor = 0;
  // Looked-up history of the contact being evaluated.
  private foundSpring = 0;
  private foundSliding = 0;

  configure(parameters: TangentialParameters): void {
    this.coefficient = parameters.coefficient;
    this.staticCoefficient = parameters.staticCoefficient > parameters.coefficient ? parameters.staticCoefficient : parameters.coefficient;
    this.stiffnessRatio = parameters.stiffnessRatio;
    this.stiffnessNPerM = parameters.stiffnessNPerM;
    this.dampingRatio = parameters.dampingRatio;
    this.rollingResistance = parameters.rollingResistance;
    this.previousCount = 0;
    this.clearPass();
  }

  /** Empties the pass's contact list and its sums (the history of the previous pass stays). */
  private clearPass(): void {
    this.currentCount = 0;
    this.cursor = 0;
    this.maxOmegaSquared = 0;
    this.slidingContacts = 0;
    this.stickingContacts = 0;
    this.maxSlipMPerS = 0;
    this.springPotentialJ = 0;
    this.wallTorqueNm = 0;
  }

  /** Number of contacts with history after the last pass. */
  get contactCount(): number {
    return this.currentCount;
  }

  /**
   * Appends the last pass's contacts to `out` as (body, other, sliding) triples in canonical order, at
   * most `max` of them: other ≥ 0 is a body, other < 0 the wall −1 − other; sliding is 1 or 0. For
   * the replay's stick/slide marks (called at sample times only, not per step).
   */
  listContacts(out: number[], max: number): void {
    const count = this.currentCount < max ? this.currentCount : max;
    for (let slot = 0; slot < count; slot++) out.push(this.currentA[slot], this.currentB[slot], this.currentSliding[slot]);
  }

  /** Starts a force pass: the last pass's contacts become the history to read; torques are cleared. */
  beginPass(bodies: Bodies): void {
    const { torque, count } = bodies;
    for (let i = 0; i < count; i++) torque[i] = 0;
    let swapInt = this.previousA;
    this.previousA = this.currentA;
    this.currentA = swapInt;
    swapInt = this.previousB;
    this.previousB = this.currentB;
    this.currentB = swapInt;
    const swapSpring = this.previousSpring;
    this.previousSpring = this.currentSpring;
    this.currentSpring = swapSpring;
    const swapSliding = this.previousSliding;
    this.previousSliding = this.currentSliding;
    this.currentSliding = swapSliding;
    this.previousCount = this.currentCount;
    this.clearPass();
  }

  /**
   * Tangential force and rolling torque of the overlapping pair i < j (normal from i towards j at
   * centre distance `distanceM`), added to fx, fy and torque. `normalForceN` is the clamped normal
   * force (≥ 0), `normalStiffnessNPerM` the contact's current normal stiffness.
   */
  pair(bodies: Bodies, i: number, j: number, normalX: number, normalY: number, distanceM: number, normalForceN: number, normalStiffnessNPerM: number): void {
    const { x, y, previousX, previousY, vx, vy, angle, previousAngle, omega, radius, inverseMass, inverseInertia, fx, fy, torque } = bodies;
    const tangentX = -normalY;
    const tangentY = normalX;
    const radiusSum = radius[i] + radius[j];
    const leverI = (distanceM * radius[i]) / radiusSum;
    const leverJ = (distanceM * radius[j]) / radiusSum;
    const slip = (vx[i] - vx[j]) * tangentX + (vy[i] - vy[j]) * tangentY + omega[i] * leverI + omega[j] * leverJ;
    // The step's tangential shift, taken with the tangent and lever arms halfway through the step
    // (the mean of the step's ends): the end values alone would make the spring first-order
    // accurate whatever the integrator.
    const previousDx = previousX[j] - previousX[i];
    const previousDy = previousY[j] - previousY[i];
    const previousDistance = Math.sqrt(previousDx * previousDx + previousDy * previousDy);
    const previousNormalX = previousDistance > 0 ? previousDx / previousDistance : normalX;
    const previousNormalY = previousDistance > 0 ? previousDy / previousDistance : normalY;
    const midTangentX = -0.5 * (normalY + previousNormalY);
    const midTangentY = 0.5 * (normalX + previousNormalX);
    const midDistance = 0.5 * (distanceM + previousDistance);
    const shift =
      (x[i] - previousX[i] - (x[j] - previousX[j])) * midTangentX +
      (y[i] - previousY[i] - (y[j] - previousY[j])) * midTangentY +
      ((angle[i] - previousAngle[i]) * midDistance * radius[i]) / radiusSum +
      ((angle[j] - previousAngle[j]) * midDistance * radius[j]) / radiusSum;
    const inverseTangentialMass = inverseMass[i] + inverseMass[j] + leverI * leverI * inverseInertia[i] + leverJ * leverJ * inverseInertia[j];
    this.find(i, j);
    const force = this.law(this.foundSpring + shift, slip, normalForceN, normalStiffnessNPerM, inverseTangentialMass, i, j);
    fx[i] += force * tangentX;
    fy[i] += force * tangentY;
    fx[j] -= force * tangentX;
    fy[j] -= force * tangentY;
    torque[i] += force * leverI;
    torque[j] += force * leverJ;
    if (this.rollingResistance > 0) {
      const relative = omega[i] - omega[j];
      if (relative !== 0) {
        const resisting = (this.rollingResistance * ((radius[i] * radius[j]) / radiusSum) * normalForceN) * (relative > 0 ? 1 : -1);
        torque[i] -= resisting;
        torque[j] += resisting;
      }
    }
  }

  /**
   * Tangential force and rolling torque of disc i against wall w (unit normal into free space,
   * centre `centreDistanceM` from the wall line), added to fx, fy and torque. Returns the
   * tangential force along the wall's tangent (−n_y, n_x), for the wall's external impulse.
   */
  wall(bodies: Bodies, i: number, w: number, normalX: number, normalY: number, centreDistanceM: number, normalForceN: number, normalStiffnessNPerM: number): number {
    const { x, y, previousX, previousY, vx, vy, angle, previousAngle, omega, radius, inverseMass, inverseInertia, fx, fy, torque } = bodies;
    const tangentX = -normalY;
    const tangentY = normalX;
    const lever = centreDistanceM > 0 ? centreDistanceM : 0;
    const slip = vx[i] * tangentX + vy[i] * tangentY - omega[i] * lever;
    // The step's tangential shift with the lever arm halfway through the step (see pair()).
    const stepX = x[i] - previousX[i];
    const stepY = y[i] - previousY[i];
    const previousLever = centreDistanceM - (normalX * stepX + normalY * stepY);
    const midLever = 0.5 * (lever + (previousLever > 0 ? previousLever : 0));
    const shift = stepX * tangentX + stepY * tangentY - (angle[i] - previousAngle[i]) * midLever;
    this.find(i, -1 - w);
    const force = this.law(this.foundSpring + shift, slip, normalForceN, normalStiffnessNPerM, inverseMass[i] + lever * lever * inverseInertia[i], i, -1 - w);
    fx[i] += force * tangentX;
    fy[i] += force * tangentY;
    let spin = -force * lever;
    if (this.rollingResistance > 0 && omega[i] !== 0) {
      spin -= this.rollingResistance * radius[i] * normalForceN * (omega[i] > 0 ? 1 : -1);
    }
    torque[i] += spin;
    // The wall's torque about the origin: x × (F_n·n + F_t·t) plus the torque on the spin.
    const wallForceX = normalForceN * normalX + force * tangentX;
    const wallForceY = normalForceN * normalY + force * tangentY;
    this.wallTorqueNm += x[i] * wallForceY - y[i] * wallForceX + spin;
    return force;
  }

  /**
   * The capped spring–dashpot force (along the tangent, acting on body a) for the spring
   * elongation `spring`, and the contact's new history appended to the current list.
   */
  private law(spring: number, slip: number, normalForceN: number, normalStiffnessNPerM: number, inverseTangentialMass: number, a: number, b: number): number {
    const stiffness = this.stiffnessNPerM > 0 ? this.stiffnessNPerM : this.stiffnessRatio * normalStiffnessNPerM;
    const omegaSquared = stiffness * inverseTangentialMass;
    if (omegaSquared > this.maxOmegaSquared) this.maxOmegaSquared = omegaSquared;
    const damping = this.dampingRatio > 0 ? 2 * this.dampingRatio * Math.sqrt(stiffness / inverseTangentialMass) : 0;
    let force = -stiffness * spring - damping * slip;
    const limit = (this.foundSliding === 1 ? this.coefficient : this.staticCoefficient) * normalForceN;
    let sliding = 0;
    if (force > limit || force < -limit) {
      sliding = 1;
      const cap = this.coefficient * normalForceN;
      force = force > 0 ? cap : -cap;
      // The spring is reset to the limit (Cundall & Strack 1979): it holds exactly the sliding force.
      spring = stiffness > 0 ? -force / stiffness : 0;
      this.slidingContacts++;
      const speed = slip < 0 ? -slip : slip;
      if (speed > this.maxSlipMPerS) this.maxSlipMPerS = speed;
    } else {
      this.stickingContacts++;
    }
    this.springPotentialJ += 0.5 * stiffness * spring * spring;
    this.append(a, b, spring, sliding);
    return force;
  }

  /** Looks up contact (a, b) in the previous pass's list (contacts arrive in canonical order). */
  private find(a: number, b: number): void {
    const { previousA, previousB, previousCount } = this;
    let cursor = this.cursor;
    while (cursor < previousCount && precedes(previousA[cursor], previousB[cursor], a, b)) cursor++;
    if (cursor < previousCount && previousA[cursor] === a && previousB[cursor] === b) {
      this.foundSpring = this.previousSpring[cursor];
      this.foundSliding = this.previousSliding[cursor];
      cursor++;
    } else {
      this.foundSpring = 0;
      this.foundSliding = 0;
    }
    this.cursor = cursor;
  }

  private append(a: number, b: number, spring: number, sliding: number): void {
    if (this.currentCount === this.currentA.length) this.grow();
    const slot = this.currentCount++;
    this.currentA[slot] = a;
    this.currentB[slot] = b;
    this.currentSpring[slot] = spring;
    this.currentSliding[slot] = sliding;
  }

  /** Doubles both lists (rare: only when more contacts touch at once than ever before in this field). */
  private grow(): void {
    const capacity = this.currentA.length * 2;
    this.currentA = grownCopy(this.currentA, new Int32Array(capacity));
    this.currentB = grownCopy(this.currentB, new Int32Array(capacity));
    this.currentSpring = grownCopy(this.currentSpring, new Float64Array(capacity));
    this.currentSliding = grownCopy(this.currentSliding, new Uint8Array(capacity));
    if (this.previousA.length < capacity) {
      this.previousA = grownCopy(this.previousA, new Int32Array(capacity));
      this.previousB = grownCopy(this.previousB, new Int32Array(capacity));
      this.previousSpring = grownCopy(this.previousSpring, new Float64Array(capacity));
      this.previousSliding = grownCopy(this.previousSliding, new Uint8Array(capacity));
    }
  }
}

/** `grown` (a larger array of the same kind) holding `values` at its start. */
function grownCopy<T extends Int32Array | Float64Array | Uint8Array>(values: T, grown: T): T {
  grown.set(values);
  return grown;
}

/**
 * Canonical contact order: disc pairs (b ≥ 0) by a then b, then disc–wall contacts (b = −1 − w)
 * by a then w. Whether contact (a1, b1) comes strictly before (a2, b2).
 */
function precedes(a1: number, b1: number, a2: number, b2: number): boolean {
  const wall1 = b1 < 0;
  const wall2 = b2 < 0;
  if (wall1 !== wall2) return wall2;
  if (a1 !== a2) return a1 < a2;
  return wall1 ? b1 > b2 : b1 < b2;
}
