/**
 * Normal contact forces between discs and against static walls, with the bookkeeping the metrics
 * need (potential energy, overlaps, tunnelling, the first contact) gathered in the same pass.
 *
 * Force along the line of centres, never attractive: F = max(0, F_spring + F_damping) with
 *   linear: F_spring = k·δ,          F_damping = c·δ̇
 *   hertz:  F_spring = k_H·δ^{3/2},  F_damping = η·δ^{1/4}·δ̇   (Tsuji-type)
 * where δ is the overlap and δ̇ its rate (positive while approaching). Because of the clamp a
 * damped contact ends when the force returns to zero, slightly before the overlap does; the first
 * contact's duration and restitution are measured at that moment, and the damping conversions in
 * `damping.ts` use the same criterion. The moment is interpolated between two steps on the end
 * gauge (endGauge), which is smooth in time there, so it is placed to second order.
 *
 * Tunnelling (a pair or a wall that the step size lets bodies pass through) is flagged when
 *  - a pair is first seen overlapping while already past its closest approach along the step's
 *    straight-line relative motion (head-on: the centres have crossed),
 *  - an overlapping pair's centre line turns by 90° or more within one step (centres crossed
 *    while in contact),
 *  - a pair's straight-line relative motion during a step came closer than the sum of radii
 *    although neither end of the step overlaps (a skipped contact), or
 *  - a disc's centre reaches or crosses a wall line.
 *
 * Pair order is canonical (i ascending, then j ascending) for both broad phases, so forces,
 * energies and metrics are byte-identical whichever broad phase finds the pairs.
 */
import type { Bodies } from "./bodies";
import type { ForceField } from "./integrators";
import { BroadPhase, NEIGHBOUR_LIST_SKIN_FRACTION } from "./broad-phase";
import { NO_TANGENTIAL, TangentialContacts, tangentialActive, type TangentialParameters } from "./tangential";

export const CONTACT_LINEAR = 0;
export const CONTACT_HERTZ = 1;

export const DAMPING_NONE = 0;
/** linear: c (N·s/m); hertz: η (N·s/m^{5/4}). */
export const DAMPING_COEFFICIENT = 1;
/** linear: damping ratio ζ, c = 2ζ√(m_eff·k); hertz: β, η = β√(m_eff·k_H). */
export const DAMPING_DIMENSIONLESS = 2;

export const BROAD_PHASE_ALL_PAIRS = 0;
export const BROAD_PHASE_GRID = 1;

export const TUNNEL_NONE = 0;
export const TUNNEL_ENTERED_PAST_CLOSEST_APPROACH = 1;
export const TUNNEL_CENTRES_CROSSED = 2;
export const TUNNEL_SKIPPED_CONTACT = 3;
export const TUNNEL_THROUGH_WALL = 4;

/**
 * Depth, as a fraction of the smaller radius, by which a step's straight-line relative motion must
 * cut into contact before a contact counts as skipped (our choice: far above rounding and the
 * chord error of a resting pile, far below any pass-through; see checkSkippedContact).
 */
export const SKIPPED_CONTACT_DEPTH_FRACTION = 1e-3;

export const FIRST_CONTACT_PENDING = 0;
export const FIRST_CONTACT_ACTIVE = 1;
export const FIRST_CONTACT_ENDED = 2;

/** A wall is the line n·p = offset; the allowed side is n·p > offset (n is a unit vector). */
export interface Wall {
  normalX: number;
  normalY: number;
  offsetM: number;
}

export interface ContactFieldParameters {
  model: typeof CONTACT_LINEAR | typeof CONTACT_HERTZ;
  /** linear k (N/m), or hertz k_H (N/m^{3/2}) when `hertzModulusFactorPa` is 0. */
  stiffness: number;
  /** (4/3)·E* (Pa) when the Hertz stiffness comes from a material: k_H = this·√R*; else 0. */
  hertzModulusFactorPa: number;
  /** The same for disc–wall contacts (a rigid wall has its own E*); absent: hertzModulusFactorPa. */
  wallHertzModulusFactorPa?: number;
  dampingMode: typeof DAMPING_NONE | typeof DAMPING_COEFFICIENT | typeof DAMPING_DIMENSIONLESS;
  dampingValue: number;
  walls: readonly Wall[];
  gravityMPerS2: number;
  broadPhase: typeof BROAD_PHASE_ALL_PAIRS | typeof BROAD_PHASE_GRID;
  /**
   * Depth (fraction of the smaller radius) a step's straight-line motion must cut into contact to
   * count as a skipped contact or an entry past the closest approach: SKIPPED_CONTACT_DEPTH_FRACTION
   * under verdict rules 2, 0 under rules 1 (so re-run cells of stored sweeps match their other cells).
   */
  nearMissDepthFraction: number;
  /** Friction and rolling resistance (./tangential.ts); absent: frictionless, no rotation. */
  tangential?: TangentialParameters;
}

// Slots of ContactField.pass: what the last evaluation found.
/** Contact potential energy (J): springs of the normal law, plus the tangential springs. */
export const PASS_POTENTIAL_J = 0;
/** Contacts (pairs and walls) overlapping this pass. */
export const PASS_OVERLAPPING_CONTACTS = 1;
/** Largest overlap as a fraction of the smaller radius, and in metres. */
export const PASS_MAX_OVERLAP_FRACTION = 2;
export const PASS_MAX_OVERLAP_M = 3;
/** Total force (N) the walls exert on the bodies. */
export const PASS_WALL_FORCE_X_N = 4;
export const PASS_WALL_FORCE_Y_N = 5;
/** Largest K/m_eff (1/s²) of any contact this pass: K the contact's current stiffness (k, or dF/dδ for Hertz). */
export const PASS_MAX_OMEGA_SQUARED = 6;
/** 1 when this pass found a tunnel (the run keeps only the first: ContactRunReport). */
export const PASS_TUNNEL_DETECTED = 7;
/** 1 when the run's first contact began, or ended, in this pass. */
export const PASS_FIRST_CONTACT_STARTED = 8;
export const PASS_FIRST_CONTACT_ENDED = 9;
/** 1 when this pass evaluated the active first contact (not seen: it ended without overlap). */
export const PASS_FIRST_CONTACT_SEEN = 10;
export const PASS_SLOTS = 11;

/** What one run records once: its first tunnel (sticky) and its first contact. */
export class ContactRunReport {
  tunnelKind = TUNNEL_NONE;
  tunnelBodyA = -1;
  /** Other body, or −1 − wall index. */
  tunnelBodyB = -1;

  // The first contact of the run: bodies, phase and the values needed for duration and restitution.
  firstContactPhase = FIRST_CONTACT_PENDING;
  firstContactA = -1;
  /** Other body, or −1 − wall index for a wall. */
  firstContactB = -1;
  /** Overlap before (≤ 0) and at (> 0) the step where the contact began. */
  firstContactStartOverlapBeforeM = 0;
  firstContactStartOverlapM = 0;
  /** Approach speed δ̇ along the normal when the contact began (> 0). */
  firstContactApproachSpeedMPerS = 0;
  /** Unclamped force at the previous and current evaluation while active. */
  firstContactForcePreviousN = 0;
  firstContactForceN = 0;
  /**
   * The end gauge (see endGauge) at the previous and current evaluation while active: the contact
   * ends where it crosses zero, and it is smooth in time there, so interpolating it linearly
   * between two evaluations places the end to second order in the step.
   */
  firstContactEndGaugePrevious = 0;
  firstContactEndGauge = 0;
  /** Normal (from A towards B, or the wall normal) at the end of the contact. */
  firstContactEndNormalX = 0;
  firstContactEndNormalY = 0;
}

export class ContactField implements ForceField {
  model = 0;
  stiffness = 0;
  hertzModulusFactorPa = 0;
  wallHertzModulusFactorPa = 0;
  dampingMode = 0;
  dampingValue = 0;
  gravityMPerS2 = 0;
  broadPhase = 0;
  nearMissDepthFraction = 0;
  /** Friction or rolling resistance acts: the tangential law runs in pair() and walls(). */
  frictional = false;
  /**
   * Linear law without a tangential one: pairs and walls go through linearPairRows / wallsLinear, the
   * same arithmetic as pair / walls with normalForce and the damping inlined (no double arguments
   * to box on the heap, no calls in the per-contact path).
   */
  private linearFrictionless = false;
  readonly tangential = new TangentialContacts();
  private readonly wallNormalX: number[] = [];
  private readonly wallNormalY: number[] = [];
  private readonly wallOffset: number[] = [];
  wallCount = 0;

  /**
   * Results of the last evaluation, one slot per PASS_* constant; every slot starts each pass at 0
   * (see startPass). A typed array rather than fields: the reset cannot drift from the declaration,
   * and writes are plain double stores.
   */
  readonly pass = new Float64Array(PASS_SLOTS);
  /** Stiffness K (N/m) of the contact whose force was evaluated last (set by normalForce). */
  private lastStiffnessNPerM = 0;
  /** k_H and η of the Hertz contact whose force was evaluated last (set by normalForce; read by endGauge). */
  private lastHertzStiffness = 0;
  private lastHertzDamping = 0;
  /** The run's first tunnel and first contact; a fresh one per run (configure). */
  run = new ContactRunReport();
  private cutoffSquaredM2 = 0;
  private memoEffectiveRadius = NaN;
  private memoModulusFactor = NaN;
  private memoHertzStiffness = 0;
  private memoReducedMass = NaN;
  private memoStiffness = NaN;
  private memoDamping = 0;
  /** Which pairs a pass looks at (./broad-phase.ts); its buffers are kept from run to run. */
  private readonly broad = new BroadPhase();

  constructor(parameters: ContactFieldParameters) {
    this.configure(parameters);
  }

  /**
   * Sets the parameters and clears everything a previous run recorded, so one instance can serve
   * many runs (a sweep runs thousands of small cells; the grid buffers are kept).
   */
  configure(parameters: ContactFieldParameters): void {
    this.model = parameters.model;
    this.stiffness = parameters.stiffness;
    this.hertzModulusFactorPa = parameters.hertzModulusFactorPa;
    this.wallHertzModulusFactorPa = parameters.wallHertzModulusFactorPa ?? parameters.hertzModulusFactorPa;
    this.dampingMode = parameters.dampingMode;
    this.dampingValue = parameters.dampingValue;
    this.gravityMPerS2 = parameters.gravityMPerS2;
    this.broadPhase = parameters.broadPhase;
    this.nearMissDepthFraction = parameters.nearMissDepthFraction;
    const tangential = parameters.tangential ?? NO_TANGENTIAL;
    this.frictional = tangentialActive(tangential);
    this.linearFrictionless = this.model === CONTACT_LINEAR && !this.frictional;
    this.tangential.configure(tangential);
    this.wallCount = parameters.walls.length;
    this.wallNormalX.length = 0;
    this.wallNormalY.length = 0;
    this.wallOffset.length = 0;
    for (const wall of parameters.walls) {
      this.wallNormalX.push(wall.normalX);
      this.wallNormalY.push(wall.normalY);
      this.wallOffset.push(wall.offsetM);
    }
    this.startPass();
    this.run = new ContactRunReport();
    this.cutoffSquaredM2 = 0;
    this.memoEffectiveRadius = NaN;
    this.memoModulusFactor = NaN;
    this.memoReducedMass = NaN;
    this.memoStiffness = NaN;
    this.broad.invalidateList();
  }

  /** Every pass result back to 0 (a loop the JIT unrolls: no builtin call in a ~100 ns evaluate). */
  private startPass(): void {
    const pass = this.pass;
    for (let slot = 0; slot < PASS_SLOTS; slot++) pass[slot] = 0;
  }

  evaluate(bodies: Bodies): void {
    const { count, fx, fy, mass } = bodies;
    const gravity = this.gravityMPerS2;
    this.startPass();
    this.broad.wallBandUsable = false;
    if (this.frictional) this.tangential.beginPass(bodies);

    // One pass over the bodies: reset the forces to gravity, find the largest step displacement and
    // radius (pairs farther apart than the cutoff cannot touch now nor have skipped a contact during
    // the step) and, when there is a neighbour list to check, the largest drift since its build.
    const { x, y, previousX, previousY, radius } = bodies;
    const grid = this.broadPhase === BROAD_PHASE_GRID && count > 1;
    const checkList = grid && this.broad.hasListFor(bodies);
    const { listX, listY } = this.broad;
    let maxDisplacementSquared = 0;
    let maxRadius = 0;
    let driftSquared = 0;
    // Sum of the squared drifts: finite exactly when every position is (the wall band needs that).
    let driftSum = 0;
    for (let i = 0; i < count; i++) {
      fx[i] = 0;
      fy[i] = -mass[i] * gravity;
      const xi = x[i];
      const yi = y[i];
      const dx = xi - previousX[i];
      const dy = yi - previousY[i];
      const displacementSquared = dx * dx + dy * dy;
      if (displacementSquared > maxDisplacementSquared) maxDisplacementSquared = displacementSquared;
      if (radius[i] > maxRadius) maxRadius = radius[i];
      if (checkList) {
        const driftX = xi - listX[i];
        const driftY = yi - listY[i];
        const squared = driftX * driftX + driftY * driftY;
        // Written so that NaN propagates: a non-finite drift invalidates the list.
        if (!(squared <= driftSquared)) driftSquared = squared;
        driftSum += squared;
      }
    }
    const cutoffM = 2 * maxRadius + 2 * Math.sqrt(maxDisplacementSquared);
    this.cutoffSquaredM2 = cutoffM * cutoffM;

    if (grid) this.pairsByNeighbourList(bodies, cutoffM, maxRadius, checkList, driftSquared, driftSum);
    else this.pairsAllPairs(bodies);
    if (this.wallCount > 0) {
      if (this.linearFrictionless) this.wallsLinear(bodies);
      else this.walls(bodies);
    }
    if (this.frictional) this.pass[PASS_POTENTIAL_J] += this.tangential.springPotentialJ;

    if (this.run.firstContactPhase === FIRST_CONTACT_ACTIVE && this.pass[PASS_FIRST_CONTACT_SEEN] === 0) {
      this.endFirstContactWithoutOverlap(bodies);
    }
  }

  private pairsAllPairs(bodies: Bodies): void {
    const count = bodies.count;
    if (this.linearFrictionless) {
      const broad = this.broad;
      broad.fillAllPairRows(count);
      this.linearPairRows(bodies, broad.allPairsStart, broad.allPairsEnd, broad.allPairsPartners);
      return;
    }
    for (let i = 0; i < count; i++) {
      for (let j = i + 1; j < count; j++) this.pair(bodies, i, j);
    }
  }

  /**
   * The grid broad phase without a grid every step: a list of the pairs within the cutoff plus a
   * skin, kept while no body has drifted far enough for an unlisted pair to come within the
   * cutoff (a pair now closer than the cutoff was closer than cutoff + 2·drift at the build).
   * Pairs beyond the cutoff do nothing in `pair`, and the list keeps the canonical (i, j) order,
   * so the result is byte-identical to the grid's every step.
   */
  private pairsByNeighbourList(bodies: Bodies, cutoffM: number, maxRadius: number, listed: boolean, driftSquared: number, driftSum: number): void {
    const count = bodies.count;
    const broad = this.broad;
    let valid = listed;
    if (valid) {
      valid = broad.listHolds(cutoffM, driftSquared);
      broad.wallBandUsable = valid && driftSum < Infinity;
    }
    if (!valid) {
      if (!broad.buildNeighbourList(bodies, cutoffM + NEIGHBOUR_LIST_SKIN_FRACTION * maxRadius, maxRadius, this.wallNormalX, this.wallNormalY, this.wallOffset)) {
        // Non-finite state (the run is exploding): the per-step grid, exactly as without a list.
        broad.invalidateList();
        this.pairsByGrid(bodies, cutoffM);
        return;
      }
      broad.wallBandUsable = true;
    }
    const { listStart, listEnd, listPartners } = broad;
    if (this.linearFrictionless) {
      this.linearPairRows(bodies, listStart, listEnd, listPartners);
      return;
    }
    for (let i = 0; i < count; i++) {
      const end = listEnd[i];
      for (let slot = listStart[i]; slot < end; slot++) this.pair(bodies, i, listPartners[slot]);
    }
  }

  /** The uniform grid every step, one cutoff wide (no list): for a state the list cannot take. */
  private pairsByGrid(bodies: Bodies, cutoffM: number): void {
    const count = bodies.count;
    const broad = this.broad;
    if (!broad.layOutGridOverBodies(bodies, cutoffM, false)) {
      // Non-finite positions: the run is exploding; fall back to the plain loop for this pass.
      this.pairsAllPairs(bodies);
      return;
    }
    for (let i = 0; i < count; i++) {
      const candidateCount = broad.gatherCandidates(bodies, i, false, 0);
      const candidates = broad.candidates;
      for (let c = 0; c < candidateCount; c++) this.pair(bodies, i, candidates[c]);
    }
  }

  /** One pair i < j: force, bookkeeping and tunnel checks. */
  private pair(bodies: Bodies, i: number, j: number): void {
    const pass = this.pass;
    const { x, y, previousX, previousY, radius } = bodies;
    const dx = x[j] - x[i];
    const dy = y[j] - y[i];
    const distanceSquared = dx * dx + dy * dy;
    const contactDistance = radius[i] + radius[j];
    const contactDistanceSquared = contactDistance * contactDistance;
    if (distanceSquared >= contactDistanceSquared) {
      if (distanceSquared >= this.cutoffSquaredM2) return;
      this.checkSkippedContact(bodies, i, j, dx, dy, contactDistanceSquared);
      return;
    }
    const previousDx = previousX[j] - previousX[i];
    const previousDy = previousY[j] - previousY[i];
    const previousDistanceSquared = previousDx * previousDx + previousDy * previousDy;
    const distance = Math.sqrt(distanceSquared);
    let normalX: number;
    let normalY: number;
    if (distance > 0) {
      normalX = dx / distance;
      normalY = dy / distance;
    } else {
      // Coincident centres: push apart along the last direction of approach (or x).
      const previousDistance = Math.sqrt(previousDistanceSquared);
      normalX = previousDistance > 0 ? previousDx / previousDistance : 1;
      normalY = previousDistance > 0 ? previousDy / previousDistance : 0;
      this.recordTunnel(TUNNEL_CENTRES_CROSSED, i, j);
    }
    if (previousDistanceSquared >= contactDistanceSquared) {
      // New contact: entering it while already receding means the step jumped past the approach,
      // unless the approach it jumped past only grazed contact (see checkSkippedContact).
      if (dx * (dx - previousDx) + dy * (dy - previousDy) >= 0 && this.passedDeeperThanTolerance(radius[i], radius[j], contactDistance, previousDx, previousDy, dx - previousDx, dy - previousDy)) {
        this.recordTunnel(TUNNEL_ENTERED_PAST_CLOSEST_APPROACH, i, j);
      }
    } else if (dx * previousDx + dy * previousDy <= 0) {
      this.recordTunnel(TUNNEL_CENTRES_CROSSED, i, j);
    }
    const overlap = contactDistance - distance;
    const { vx, vy, inverseMass } = bodies;
    const overlapRate = (vx[i] - vx[j]) * normalX + (vy[i] - vy[j]) * normalY;
    const reducedMass = 1 / (inverseMass[i] + inverseMass[j]);
    const effectiveRadius = (radius[i] * radius[j]) / contactDistance;
    const force = this.normalForce(overlap, overlapRate, reducedMass, effectiveRadius, this.hertzModulusFactorPa);
    const omegaSquared = this.lastStiffnessNPerM / reducedMass;
    if (omegaSquared > pass[PASS_MAX_OMEGA_SQUARED]) pass[PASS_MAX_OMEGA_SQUARED] = omegaSquared;
    const pushX = force > 0 ? force * normalX : 0;
    const pushY = force > 0 ? force * normalY : 0;
    const { fx, fy } = bodies;
    fx[i] -= pushX;
    fy[i] -= pushY;
    fx[j] += pushX;
    fy[j] += pushY;
    if (this.frictional) this.tangential.pair(bodies, i, j, normalX, normalY, distance, force > 0 ? force : 0, this.lastStiffnessNPerM);
    pass[PASS_OVERLAPPING_CONTACTS]++;
    const smallerRadius = radius[i] < radius[j] ? radius[i] : radius[j];
    const fraction = overlap / smallerRadius;
    if (fraction > pass[PASS_MAX_OVERLAP_FRACTION]) pass[PASS_MAX_OVERLAP_FRACTION] = fraction;
    if (overlap > pass[PASS_MAX_OVERLAP_M]) pass[PASS_MAX_OVERLAP_M] = overlap;
    // Called only when the first contact can change (see linearPairRows): no boxed numbers per contact.
    const phase = this.run.firstContactPhase;
    const isNewContact = previousDistanceSquared >= contactDistanceSquared;
    if (phase === FIRST_CONTACT_PENDING ? isNewContact : phase === FIRST_CONTACT_ACTIVE && i === this.run.firstContactA && j === this.run.firstContactB) {
      const previousOverlap = isNewContact && phase === FIRST_CONTACT_PENDING ? contactDistance - Math.sqrt(previousDistanceSquared) : 0;
      this.trackFirstContact(i, j, overlap, overlapRate, force, normalX, normalY, isNewContact, previousOverlap);
    }
  }

  /**
   * pair() over rows of pairs, for the linear law without friction: row i holds body i's partners
   * j at partners[rowStart[i] .. rowEnd[i]] (the neighbour list's, or every j > i). One row shape
   * for both broad phases keeps the compiled loop free of a branch per pair between them: when both
   * shapes had run in a process (a pair sweep primes its forces here, all pairs), the pile's loop
   * ran about a quarter slower than in a fresh process. The same operations in the same order as
   * pair() for each pair, with
   * checkSkippedContact, normalForce and dampingCoefficient written out, body i's values and force
   * held in locals across its row (no other pair of the row touches them), the pass's sums and
   * maxima in locals, and trackFirstContact called only when it can record something. Results are
   * byte-identical to pair()'s. The contact normal and the tunnel tests stay written out here too:
   * the same lines as small shared helpers (which V8 reported inlined) made the settled pile of
   * N = 1,000 take 0.150 s instead of 0.087 s (`npm run bench -- contact-kernel`, quiet machine).
   */
  private linearPairRows(bodies: Bodies, rowStart: Int32Array, rowEnd: Int32Array, partners: Int32Array): void {
    const { count, x, y, vx, vy, fx, fy, previousX, previousY, radius, inverseMass } = bodies;
    const k = this.stiffness;
    const dampingMode = this.dampingMode;
    const dampingValue = this.dampingValue;
    const cutoffSquared = this.cutoffSquaredM2;
    const nearMissDepthFraction = this.nearMissDepthFraction;
    let contactPotentialJ = this.pass[PASS_POTENTIAL_J];
    let overlappingContacts = this.pass[PASS_OVERLAPPING_CONTACTS];
    let maxOverlapFraction = this.pass[PASS_MAX_OVERLAP_FRACTION];
    let maxOverlapM = this.pass[PASS_MAX_OVERLAP_M];
    let maxOmegaSquared = this.pass[PASS_MAX_OMEGA_SQUARED];
    // Values that repeat from contact to contact, remembered (each is a function of the inputs it is
    // remembered for, so reusing it gives the same bits): the reduced mass and K/m_eff for a sum of
    // inverse masses (not for a zero sum, where ±0 would give ±Infinity), dampingCoefficient's c for
    // a reduced mass.
    let memoInverseMassSum = NaN;
    let reducedMass = NaN;
    let omegaSquared = NaN;
    let memoReducedMass = NaN;
    let memoDamping = 0;
    // The largest overlap whose fraction of `memoSmallerRadius` has been folded into the maximum:
    // overlap / r is monotone in the overlap for r > 0, so a smaller overlap cannot raise it.
    let memoSmallerRadius = NaN;
    let memoFoldedOverlap = NaN;
    for (let i = 0; i < count; i++) {
      const end = rowEnd[i];
      let slot = rowStart[i];
      if (slot >= end) continue;
      const xi = x[i];
      const yi = y[i];
      const previousXi = previousX[i];
      const previousYi = previousY[i];
      const radiusI = radius[i];
      const inverseMassI = inverseMass[i];
      const vxi = vx[i];
      const vyi = vy[i];
      let fxi = fx[i];
      let fyi = fy[i];
      for (; slot < end; slot++) {
        const j = partners[slot];
        const dx = x[j] - xi;
        const dy = y[j] - yi;
        const distanceSquared = dx * dx + dy * dy;
        const radiusJ = radius[j];
        const contactDistance = radiusI + radiusJ;
        const contactDistanceSquared = contactDistance * contactDistance;
        if (distanceSquared >= contactDistanceSquared) {
          if (distanceSquared >= cutoffSquared) continue;
          // checkSkippedContact.
          const previousDx = previousX[j] - previousXi;
          const previousDy = previousY[j] - previousYi;
          if (previousDx * previousDx + previousDy * previousDy < contactDistanceSquared) continue;
          const stepX = dx - previousDx;
          const stepY = dy - previousDy;
          const stepSquared = stepX * stepX + stepY * stepY;
          if (stepSquared === 0) continue;
          const along = -(previousDx * stepX + previousDy * stepY) / stepSquared;
          if (along <= 0 || along >= 1) continue;
          const closestX = previousDx + along * stepX;
          const closestY = previousDy + along * stepY;
          const smallerRadius = radiusI < radiusJ ? radiusI : radiusJ;
          const depthLimit = Math.sqrt(contactDistanceSquared) - nearMissDepthFraction * smallerRadius;
          if (closestX * closestX + closestY * closestY < depthLimit * depthLimit) this.recordTunnel(TUNNEL_SKIPPED_CONTACT, i, j);
          continue;
        }
        const previousDx = previousX[j] - previousXi;
        const previousDy = previousY[j] - previousYi;
        const previousDistanceSquared = previousDx * previousDx + previousDy * previousDy;
        const distance = Math.sqrt(distanceSquared);
        let normalX: number;
        let normalY: number;
        if (distance > 0) {
          normalX = dx / distance;
          normalY = dy / distance;
        } else {
          const previousDistance = Math.sqrt(previousDistanceSquared);
          normalX = previousDistance > 0 ? previousDx / previousDistance : 1;
          normalY = previousDistance > 0 ? previousDy / previousDistance : 0;
          this.recordTunnel(TUNNEL_CENTRES_CROSSED, i, j);
        }
        const isNewContact = previousDistanceSquared >= contactDistanceSquared;
        if (isNewContact) {
          if (dx * (dx - previousDx) + dy * (dy - previousDy) >= 0 && this.passedDeeperThanTolerance(radiusI, radiusJ, contactDistance, previousDx, previousDy, dx - previousDx, dy - previousDy)) {
            this.recordTunnel(TUNNEL_ENTERED_PAST_CLOSEST_APPROACH, i, j);
          }
        } else if (dx * previousDx + dy * previousDy <= 0) {
          this.recordTunnel(TUNNEL_CENTRES_CROSSED, i, j);
        }
        const overlap = contactDistance - distance;
        const overlapRate = (vxi - vx[j]) * normalX + (vyi - vy[j]) * normalY;
        const inverseMassSum = inverseMassI + inverseMass[j];
        if (!(inverseMassSum === memoInverseMassSum && inverseMassSum !== 0)) {
          memoInverseMassSum = inverseMassSum;
          reducedMass = 1 / inverseMassSum;
          omegaSquared = k / reducedMass;
        }
        // normalForce, linear.
        if (overlap > 0) contactPotentialJ += 0.5 * k * overlap * overlap;
        let damping = 0;
        if (dampingMode === DAMPING_COEFFICIENT) damping = dampingValue;
        else if (dampingMode === DAMPING_DIMENSIONLESS) {
          if (reducedMass !== memoReducedMass) {
            memoReducedMass = reducedMass;
            memoDamping = 2 * dampingValue * Math.sqrt(reducedMass * k);
          }
          damping = memoDamping;
        }
        const force = k * overlap + damping * overlapRate;
        if (omegaSquared > maxOmegaSquared) maxOmegaSquared = omegaSquared;
        const pushX = force > 0 ? force * normalX : 0;
        const pushY = force > 0 ? force * normalY : 0;
        fxi -= pushX;
        fyi -= pushY;
        fx[j] += pushX;
        fy[j] += pushY;
        overlappingContacts++;
        const smallerRadius = radiusI < radiusJ ? radiusI : radiusJ;
        if (!(smallerRadius === memoSmallerRadius && smallerRadius > 0 && overlap <= memoFoldedOverlap)) {
          const fraction = overlap / smallerRadius;
          if (fraction > maxOverlapFraction) maxOverlapFraction = fraction;
          if (smallerRadius !== memoSmallerRadius || overlap > memoFoldedOverlap || memoFoldedOverlap !== memoFoldedOverlap) {
            memoSmallerRadius = smallerRadius;
            memoFoldedOverlap = overlap;
          }
        }
        if (overlap > maxOverlapM) maxOverlapM = overlap;
        // One call site, reached only when the first contact can change: the compiler boxes the
        // call's numbers where it is taken, not for every contact (two call sites had it box them
        // up front).
        const phase = this.run.firstContactPhase;
        if (phase === FIRST_CONTACT_PENDING ? isNewContact : phase === FIRST_CONTACT_ACTIVE && i === this.run.firstContactA && j === this.run.firstContactB) {
          const previousOverlap = isNewContact && phase === FIRST_CONTACT_PENDING ? contactDistance - Math.sqrt(previousDistanceSquared) : 0;
          this.trackFirstContact(i, j, overlap, overlapRate, force, normalX, normalY, isNewContact, previousOverlap);
        }
      }
      fx[i] = fxi;
      fy[i] = fyi;
    }
    this.pass[PASS_POTENTIAL_J] = contactPotentialJ;
    this.pass[PASS_OVERLAPPING_CONTACTS] = overlappingContacts;
    this.pass[PASS_MAX_OVERLAP_FRACTION] = maxOverlapFraction;
    this.pass[PASS_MAX_OVERLAP_M] = maxOverlapM;
    this.pass[PASS_MAX_OMEGA_SQUARED] = maxOmegaSquared;
  }
  /**
   * A skipped contact: neither end of the step overlaps, but the straight line between them comes
   * closer than the sum of radii by more than SKIPPED_CONTACT_DEPTH_FRACTION of the smaller radius.
   * The tolerance keeps near misses out: in a resting pile neighbours sit nanometres apart, and the
   * chord between two step ends of a curved (accelerated) path dips below the true path by up to
   * |Δv|·h/8, so a straight line that grazes contact by that much is no body passing another.
   * A body that does pass through another misses by (1 − f) of the sum of radii (f the impact
   * offset), so only passes within 1/1000 of a radius of grazing are no longer called tunnels.
   */
  private checkSkippedContact(bodies: Bodies, i: number, j: number, dx: number, dy: number, contactDistanceSquared: number): void {
    const { previousX, previousY, radius } = bodies;
    const previousDx = previousX[j] - previousX[i];
    const previousDy = previousY[j] - previousY[i];
    if (previousDx * previousDx + previousDy * previousDy < contactDistanceSquared) return; // contact ended this step
    const stepX = dx - previousDx;
    const stepY = dy - previousDy;
    const stepSquared = stepX * stepX + stepY * stepY;
    if (stepSquared === 0) return;
    const along = -(previousDx * stepX + previousDy * stepY) / stepSquared;
    if (along <= 0 || along >= 1) return;
    const closestX = previousDx + along * stepX;
    const closestY = previousDy + along * stepY;
    const smallerRadius = radius[i] < radius[j] ? radius[i] : radius[j];
    const depthLimit = Math.sqrt(contactDistanceSquared) - this.nearMissDepthFraction * smallerRadius;
    if (closestX * closestX + closestY * closestY < depthLimit * depthLimit) this.recordTunnel(TUNNEL_SKIPPED_CONTACT, i, j);
  }

  /**
   * Whether the straight-line relative motion of a step (from (startX, startY) by (stepX, stepY))
   * came closer than the sum of radii by more than SKIPPED_CONTACT_DEPTH_FRACTION of the smaller radius.
   */
  private passedDeeperThanTolerance(radiusA: number, radiusB: number, contactDistance: number, startX: number, startY: number, stepX: number, stepY: number): boolean {
    const stepSquared = stepX * stepX + stepY * stepY;
    let along = stepSquared > 0 ? -(startX * stepX + startY * stepY) / stepSquared : 0;
    if (along < 0) along = 0;
    else if (along > 1) along = 1;
    const closestX = startX + along * stepX;
    const closestY = startY + along * stepY;
    const depthLimit = contactDistance - this.nearMissDepthFraction * (radiusA < radiusB ? radiusA : radiusB);
    return closestX * closestX + closestY * closestY < depthLimit * depthLimit;
  }

  private walls(bodies: Bodies): void {
    const pass = this.pass;
    const { x, y, vx, vy, fx, fy, radius, mass } = bodies;
    const { wallNormalX, wallNormalY, wallOffset, wallCount } = this;
    const { wallBand, wallBandUsable: banded } = this.broad;
    const count = banded ? this.broad.wallBandCount : bodies.count;
    for (let b = 0; b < count; b++) {
      const i = banded ? wallBand[b] : b;
      for (let w = 0; w < wallCount; w++) {
        const normalX = wallNormalX[w];
        const normalY = wallNormalY[w];
        const centreDistance = normalX * x[i] + normalY * y[i] - wallOffset[w];
        const overlap = radius[i] - centreDistance;
        if (overlap <= 0) continue;
        if (centreDistance <= 0) this.recordTunnel(TUNNEL_THROUGH_WALL, i, -1 - w);
        const overlapRate = -(normalX * vx[i] + normalY * vy[i]);
        const force = this.normalForce(overlap, overlapRate, mass[i], radius[i], this.wallHertzModulusFactorPa);
        const omegaSquared = this.lastStiffnessNPerM / mass[i];
        if (omegaSquared > pass[PASS_MAX_OMEGA_SQUARED]) pass[PASS_MAX_OMEGA_SQUARED] = omegaSquared;
        if (force > 0) {
          fx[i] += force * normalX;
          fy[i] += force * normalY;
          pass[PASS_WALL_FORCE_X_N] += force * normalX;
          pass[PASS_WALL_FORCE_Y_N] += force * normalY;
        }
        if (this.frictional) {
          const tangentialForce = this.tangential.wall(bodies, i, w, normalX, normalY, centreDistance, force > 0 ? force : 0, this.lastStiffnessNPerM);
          pass[PASS_WALL_FORCE_X_N] -= tangentialForce * normalY;
          pass[PASS_WALL_FORCE_Y_N] += tangentialForce * normalX;
        }
        pass[PASS_OVERLAPPING_CONTACTS]++;
        const fraction = overlap / radius[i];
        if (fraction > pass[PASS_MAX_OVERLAP_FRACTION]) pass[PASS_MAX_OVERLAP_FRACTION] = fraction;
        if (overlap > pass[PASS_MAX_OVERLAP_M]) pass[PASS_MAX_OVERLAP_M] = overlap;
        const phase = this.run.firstContactPhase;
        if (phase === FIRST_CONTACT_PENDING || (phase === FIRST_CONTACT_ACTIVE && i === this.run.firstContactA && -1 - w === this.run.firstContactB)) {
          const previousOverlap = radius[i] - (normalX * bodies.previousX[i] + normalY * bodies.previousY[i] - wallOffset[w]);
          if (phase === FIRST_CONTACT_ACTIVE || previousOverlap <= 0) this.trackFirstContact(i, -1 - w, overlap, overlapRate, force, normalX, normalY, previousOverlap <= 0, previousOverlap);
        }
      }
    }
  }

  /** walls() for the linear law without friction (see linearPairRows): the same operations in the same order. */
  private wallsLinear(bodies: Bodies): void {
    const pass = this.pass;
    const { x, y, vx, vy, fx, fy, radius, mass, previousX, previousY } = bodies;
    const { wallNormalX, wallNormalY, wallOffset, wallCount } = this;
    const k = this.stiffness;
    const { wallBand, wallBandUsable: banded } = this.broad;
    const count = banded ? this.broad.wallBandCount : bodies.count;
    for (let b = 0; b < count; b++) {
      const i = banded ? wallBand[b] : b;
      for (let w = 0; w < wallCount; w++) {
        const normalX = wallNormalX[w];
        const normalY = wallNormalY[w];
        const centreDistance = normalX * x[i] + normalY * y[i] - wallOffset[w];
        const overlap = radius[i] - centreDistance;
        if (overlap <= 0) continue;
        if (centreDistance <= 0) this.recordTunnel(TUNNEL_THROUGH_WALL, i, -1 - w);
        const overlapRate = -(normalX * vx[i] + normalY * vy[i]);
        const reducedMass = mass[i];
        // normalForce, linear.
        this.lastStiffnessNPerM = k;
        if (overlap > 0) pass[PASS_POTENTIAL_J] += 0.5 * k * overlap * overlap;
        let damping = 0;
        if (this.dampingMode === DAMPING_COEFFICIENT) damping = this.dampingValue;
        else if (this.dampingMode === DAMPING_DIMENSIONLESS) {
          if (reducedMass !== this.memoReducedMass || k !== this.memoStiffness) {
            this.memoReducedMass = reducedMass;
            this.memoStiffness = k;
            this.memoDamping = 2 * this.dampingValue * Math.sqrt(reducedMass * k);
          }
          damping = this.memoDamping;
        }
        const force = k * overlap + damping * overlapRate;
        const omegaSquared = k / reducedMass;
        if (omegaSquared > pass[PASS_MAX_OMEGA_SQUARED]) pass[PASS_MAX_OMEGA_SQUARED] = omegaSquared;
        if (force > 0) {
          fx[i] += force * normalX;
          fy[i] += force * normalY;
          pass[PASS_WALL_FORCE_X_N] += force * normalX;
          pass[PASS_WALL_FORCE_Y_N] += force * normalY;
        }
        pass[PASS_OVERLAPPING_CONTACTS]++;
        const fraction = overlap / radius[i];
        if (fraction > pass[PASS_MAX_OVERLAP_FRACTION]) pass[PASS_MAX_OVERLAP_FRACTION] = fraction;
        if (overlap > pass[PASS_MAX_OVERLAP_M]) pass[PASS_MAX_OVERLAP_M] = overlap;
        const phase = this.run.firstContactPhase;
        if (phase === FIRST_CONTACT_PENDING || (phase === FIRST_CONTACT_ACTIVE && i === this.run.firstContactA && -1 - w === this.run.firstContactB)) {
          const previousOverlap = radius[i] - (normalX * previousX[i] + normalY * previousY[i] - wallOffset[w]);
          if (phase === FIRST_CONTACT_ACTIVE || previousOverlap <= 0) this.trackFirstContact(i, -1 - w, overlap, overlapRate, force, normalX, normalY, previousOverlap <= 0, previousOverlap);
        }
      }
    }
  }

  /**
   * Unclamped normal force (positive pushes apart) and, as a side effect, the contact's potential
   * energy. Callers clamp at zero. Sign-extended for overlap ≤ 0 so that zero crossings can be
   * interpolated; the potential is only counted for real overlaps.
   */
  private normalForce(overlap: number, overlapRate: number, reducedMass: number, effectiveRadius: number, modulusFactorPa: number): number {
    const magnitude = overlap < 0 ? -overlap : overlap;
    if (this.model === CONTACT_LINEAR) {
      const k = this.stiffness;
      this.lastStiffnessNPerM = k;
      if (overlap > 0) this.pass[PASS_POTENTIAL_J] += 0.5 * k * overlap * overlap;
      return k * overlap + this.dampingCoefficient(reducedMass, k) * overlapRate;
    }
    let k = this.stiffness;
    if (modulusFactorPa > 0) {
      if (effectiveRadius !== this.memoEffectiveRadius || modulusFactorPa !== this.memoModulusFactor) {
        this.memoEffectiveRadius = effectiveRadius;
        this.memoModulusFactor = modulusFactorPa;
        this.memoHertzStiffness = modulusFactorPa * Math.sqrt(effectiveRadius);
      }
      k = this.memoHertzStiffness;
    }
    const root = Math.sqrt(magnitude);
    const springMagnitude = k * magnitude * root;
    // dF/dδ of k_H·δ^{3/2}: the local stiffness that sets the contact's frequency at this overlap.
    this.lastStiffnessNPerM = 1.5 * k * root;
    if (overlap > 0) this.pass[PASS_POTENTIAL_J] += 0.4 * springMagnitude * magnitude;
    const eta = this.dampingCoefficient(reducedMass, k);
    this.lastHertzStiffness = k;
    this.lastHertzDamping = eta;
    return (overlap >= 0 ? springMagnitude : -springMagnitude) + eta * Math.sqrt(root) * overlapRate;
  }

  /** c (linear) or η (Hertz) for a contact; remembered for the last (mass, stiffness) pair, as most contacts repeat it. */
  private dampingCoefficient(reducedMass: number, stiffness: number): number {
    if (this.dampingMode === DAMPING_NONE) return 0;
    if (this.dampingMode === DAMPING_COEFFICIENT) return this.dampingValue;
    if (reducedMass !== this.memoReducedMass || stiffness !== this.memoStiffness) {
      this.memoReducedMass = reducedMass;
      this.memoStiffness = stiffness;
      const root = Math.sqrt(reducedMass * stiffness);
      this.memoDamping = this.model === CONTACT_LINEAR ? 2 * this.dampingValue * root : this.dampingValue * root;
    }
    return this.memoDamping;
  }

  private recordTunnel(kind: number, bodyA: number, bodyB: number): void {
    this.pass[PASS_TUNNEL_DETECTED] = 1;
    if (this.run.tunnelKind !== TUNNEL_NONE) return;
    this.run.tunnelKind = kind;
    this.run.tunnelBodyA = bodyA;
    this.run.tunnelBodyB = bodyB;
  }

  private trackFirstContact(
    a: number,
    b: number,
    overlap: number,
    overlapRate: number,
    force: number,
    normalX: number,
    normalY: number,
    isNewContact: boolean,
    previousOverlap: number,
  ): void {
    if (this.run.firstContactPhase === FIRST_CONTACT_PENDING) {
      if (!isNewContact) return;
      this.run.firstContactPhase = FIRST_CONTACT_ACTIVE;
      this.run.firstContactA = a;
      this.run.firstContactB = b;
      this.pass[PASS_FIRST_CONTACT_STARTED] = 1;
      this.pass[PASS_FIRST_CONTACT_SEEN] = 1;
      this.run.firstContactStartOverlapBeforeM = previousOverlap;
      this.run.firstContactStartOverlapM = overlap;
      this.run.firstContactApproachSpeedMPerS = overlapRate;
      this.run.firstContactForcePreviousN = 0;
      this.run.firstContactForceN = force;
      this.run.firstContactEndGaugePrevious = 0;
      this.run.firstContactEndGauge = this.endGauge(force, overlap, overlapRate);
      if (force <= 0) this.endFirstContact(force, normalX, normalY);
      return;
    }
    if (this.run.firstContactPhase !== FIRST_CONTACT_ACTIVE || a !== this.run.firstContactA || b !== this.run.firstContactB) return;
    this.pass[PASS_FIRST_CONTACT_SEEN] = 1;
    this.run.firstContactForcePreviousN = this.run.firstContactForceN;
    this.run.firstContactForceN = force;
    this.run.firstContactEndGaugePrevious = this.run.firstContactEndGauge;
    this.run.firstContactEndGauge = this.endGauge(force, overlap, overlapRate);
    if (force <= 0) this.endFirstContact(force, normalX, normalY);
  }

  /**
   * A quantity with the sign of the (unclamped) normal force of the contact just evaluated that is
   * smooth in time where the force crosses zero. Linear: the force itself (linear in δ and δ̇).
   * Hertz: the force k_H·δ^{3/2} + η·δ^{1/4}·δ̇ is not smooth there when undamped (it leaves like
   * (t_end − t)^{3/2}, so a linear interpolation on it places the end at first order only); it is
   * zero where δ = δ₀ := (η·max(0, −δ̇)/k_H)^{4/5}, so the gauge is the overlap beyond that, δ − δ₀:
   * the overlap itself when undamped, and smooth across the force's zero when damped.
   */
  private endGauge(force: number, overlap: number, overlapRate: number): number {
    if (this.model === CONTACT_LINEAR) return force;
    const eta = this.lastHertzDamping;
    if (eta === 0 || overlapRate >= 0) return overlap;
    return overlap - Math.pow((eta * -overlapRate) / this.lastHertzStiffness, 0.8);
  }

  private endFirstContact(force: number, normalX: number, normalY: number): void {
    this.run.firstContactForceN = force;
    this.run.firstContactPhase = FIRST_CONTACT_ENDED;
    this.pass[PASS_FIRST_CONTACT_ENDED] = 1;
    this.run.firstContactEndNormalX = normalX;
    this.run.firstContactEndNormalY = normalY;
  }

  /** The first contact's overlap vanished before its force reached zero (e.g. undamped): end it here. */
  private endFirstContactWithoutOverlap(bodies: Bodies): void {
    const a = this.run.firstContactA;
    const b = this.run.firstContactB;
    const { x, y, vx, vy, radius, mass, inverseMass } = bodies;
    let overlap: number;
    let overlapRate: number;
    let normalX: number;
    let normalY: number;
    let reducedMass: number;
    let effectiveRadius: number;
    let modulusFactorPa = this.hertzModulusFactorPa;
    if (b >= 0) {
      const dx = x[b] - x[a];
      const dy = y[b] - y[a];
      const distance = Math.sqrt(dx * dx + dy * dy);
      normalX = dx / distance;
      normalY = dy / distance;
      overlap = radius[a] + radius[b] - distance;
      overlapRate = (vx[a] - vx[b]) * normalX + (vy[a] - vy[b]) * normalY;
      reducedMass = 1 / (inverseMass[a] + inverseMass[b]);
      effectiveRadius = (radius[a] * radius[b]) / (radius[a] + radius[b]);
    } else {
      const w = -1 - b;
      normalX = this.wallNormalX[w];
      normalY = this.wallNormalY[w];
      overlap = radius[a] - (normalX * x[a] + normalY * y[a] - this.wallOffset[w]);
      overlapRate = -(normalX * vx[a] + normalY * vy[a]);
      reducedMass = mass[a];
      effectiveRadius = radius[a];
      modulusFactorPa = this.wallHertzModulusFactorPa;
    }
    const potentialBefore = this.pass[PASS_POTENTIAL_J];
    const force = this.normalForce(overlap, overlapRate, reducedMass, effectiveRadius, modulusFactorPa);
    this.pass[PASS_POTENTIAL_J] = potentialBefore;
    this.run.firstContactForcePreviousN = this.run.firstContactForceN;
    this.run.firstContactEndGaugePrevious = this.run.firstContactEndGauge;
    this.run.firstContactEndGauge = Math.min(this.endGauge(force, overlap, overlapRate), 0);
    this.endFirstContact(Math.min(force, 0), normalX, normalY);
  }

  /** Approach speed δ̇ of the first contact's bodies along the normal recorded at its end. */
  firstContactEndApproachSpeed(bodies: Bodies): number {
    const a = this.run.firstContactA;
    const b = this.run.firstContactB;
    const nx = this.run.firstContactEndNormalX;
    const ny = this.run.firstContactEndNormalY;
    if (b >= 0) return (bodies.vx[a] - bodies.vx[b]) * nx + (bodies.vy[a] - bodies.vy[b]) * ny;
    return -(nx * bodies.vx[a] + ny * bodies.vy[a]);
  }

  /** Reduced mass and effective radius of a contact (b < 0: a wall). */
  contactReducedMassKg(bodies: Bodies, a: number, b: number): number {
    return b >= 0 ? 1 / (bodies.inverseMass[a] + bodies.inverseMass[b]) : bodies.mass[a];
  }

  contactStiffness(bodies: Bodies, a: number, b: number): number {
    if (this.model === CONTACT_LINEAR || this.hertzModulusFactorPa === 0) return this.stiffness;
    if (b < 0) return this.wallHertzModulusFactorPa * Math.sqrt(bodies.radius[a]);
    return this.hertzModulusFactorPa * Math.sqrt((bodies.radius[a] * bodies.radius[b]) / (bodies.radius[a] + bodies.radius[b]));
  }

  /** Earliest time (s) from now at which any pair or wall would start to overlap in force-free straight-line motion. */
  timeToFirstContactS(bodies: Bodies): number {
    const { count, x, y, vx, vy, radius } = bodies;
    let earliest = Infinity;
    for (let i = 0; i < count; i++) {
      for (let j = i + 1; j < count; j++) {
        const rx = x[j] - x[i];
        const ry = y[j] - y[i];
        const wx = vx[j] - vx[i];
        const wy = vy[j] - vy[i];
        const approach = rx * wx + ry * wy;
        if (approach >= 0) continue;
        const speedSquared = wx * wx + wy * wy;
        const contactDistance = radius[i] + radius[j];
        const clearance = rx * rx + ry * ry - contactDistance * contactDistance;
        const discriminant = approach * approach - speedSquared * clearance;
        if (discriminant <= 0) continue;
        // Root of |r + w t| = R, in the form that does not cancel.
        const time = clearance / (-approach + Math.sqrt(discriminant));
        if (time < earliest) earliest = time;
      }
      for (let w = 0; w < this.wallCount; w++) {
        const normalSpeed = this.wallNormalX[w] * vx[i] + this.wallNormalY[w] * vy[i];
        if (normalSpeed >= 0) continue;
        const clearance = this.wallNormalX[w] * x[i] + this.wallNormalY[w] * y[i] - this.wallOffset[w] - radius[i];
        const time = clearance / -normalSpeed;
        if (time < earliest) earliest = time;
      }
    }
    return earliest < 0 ? 0 : earliest;
  }
}
