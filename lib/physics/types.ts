/**
 * The contract between the collision engine (lib/physics) and everything that
 * drives it (lib/sweeps, workers, the app). Plain data, SI units, every field
 * named with its unit. The sweep spec's zod schema (lib/sweeps/spec.ts) parses
 * user input into exactly these shapes; the engine trusts them.
 */

export type IntegratorName = "symplectic-euler" | "velocity-verlet" | "explicit-euler";

export type ContactModelName = "linear" | "hertz";

export type Verdict = "exploded" | "tunneled" | "deep-overlap" | "energy-drift" | "stable" | "step-unstable" | "restitution-off" | "coarse-contact" | "jitter" | "creep" | "sinking";
/**
 * Every verdict, in the order of its stored code (lib/sweeps/packed.ts stores a verdict as its index
 * here): verdicts added later are appended so stored results keep theirs. Not the precedence.
 */
export const VERDICTS: readonly Verdict[] = ["exploded", "tunneled", "deep-overlap", "energy-drift", "stable", "step-unstable", "restitution-off", "coarse-contact", "jitter", "creep", "sinking"];
/**
 * Precedence of the current verdict rules (VERDICT_RULES_VERSION): the first verdict whose condition holds wins.
 * The resting-contact verdicts (only judged in the slope and stack scenes, where bodies should come to rest):
 * - sinking: a body ended the run resting deeper in its support than the resting-overlap tolerance.
 * - jitter: bodies that should have come to rest were still moving faster than the rest-speed tolerance at the end.
 * - creep: friction should hold the body (the analytic sliding and rolling limits say so), yet it moved down the slope while at rest.
 */
export const VERDICT_PRECEDENCE: readonly Verdict[] = ["exploded", "step-unstable", "tunneled", "deep-overlap", "sinking", "restitution-off", "energy-drift", "jitter", "creep", "coarse-contact", "stable"];
/**
 * Verdicts that say the integrator failed the contact (blew up, ran past the step bound, let a body
 * through, or let it sink too deep), as against verdicts about accuracy (rebound off the target,
 * energy gained, a contact resolved in too few steps). A stiffness recommended from the stability
 * bound is refuted, and a build fails by default, only on these.
 */
export const INSTABILITY_VERDICTS: readonly Verdict[] = ["exploded", "step-unstable", "tunneled", "deep-overlap"];
// jitter, creep and sinking are not instability verdicts: each says a resting contact is off in
// accuracy (residual motion, slow slip, a soft spring's rest depth), not that the integrator blew up
// or let a body through. A stiffness from the stability bound is not refuted by them, and a
// build fails on them only when asked (--fail-on). A tangential spring past its step bound is
// judged step-unstable, which is an instability verdict.

/**
 * Version of the rules that measure a cell and turn its metrics into a verdict. 1: the rules before
 * versioning (no instability, restitution-off or coarse-contact verdicts). 2: docs/sweep-spec.md
 * "Verdict rules". 3: rules 2 with the first contact's end interpolated to second order for Hertz
 * contacts (contactDurationS, and the verdicts that read it, of Hertz cells change; linear cells
 * are byte-identical to rules 2). A scenario without `verdictRules` is judged by rules 1, as every
 * sweep stored before it was.
 */
export const VERDICT_RULES_VERSION = 3;
export const VERDICT_RULES_VERSIONS: readonly number[] = [1, 2, 3];

/** Two discs; body A moves towards body B along +x. */
export interface PairScene {
  kind: "pair";
  massAKg: number;
  massBKg: number;
  radiusAM: number;
  radiusBM: number;
  /** Speed of A along +x. */
  speedAMPerS: number;
  /** Speed of B along -x (towards A); 0 for a body at rest. */
  speedBMPerS: number;
  /** Impact parameter as a fraction of the sum of radii: 0 head-on, towards 1 glancing. In [0, 1). */
  offsetFraction: number;
  /** Surface-to-surface gap along x at t = 0 (≥ 0). */
  gapM: number;
  /** Initial angular velocities (rad/s, counter-clockwise positive); absent: 0. */
  spinARadPerS?: number;
  spinBRadPerS?: number;
}

/** One disc hitting a static wall (the line x = 0, disc starting at x > 0 moving towards it). */
export interface WallScene {
  kind: "wall";
  massKg: number;
  radiusM: number;
  speedMPerS: number;
  /** Angle between the velocity and the wall normal: 0 is head-on, towards 90 grazing. In [0, 90). */
  angleDeg: number;
  gapM: number;
  /** Initial angular velocity (rad/s, counter-clockwise positive); absent: 0. */
  spinRadPerS?: number;
}

/** `count` resting discs in a row along x, struck head-on by one more disc (the striker). */
export interface RowScene {
  kind: "row";
  count: number;
  massKg: number;
  radiusM: number;
  strikerMassKg: number;
  strikerSpeedMPerS: number;
  /** Surface gap between neighbouring resting discs (0 = touching). */
  spacingM: number;
  /** Surface gap between the striker and the first disc. */
  gapM: number;
}

/** `count` discs in a walled box [0, width] × [0, height], seeded positions and velocities. */
export interface BoxScene {
  kind: "box";
  count: number;
  massKg: number;
  radiusM: number;
  widthM: number;
  heightM: number;
  /** Initial speeds are drawn uniformly in [0, maxSpeedMPerS] with uniform directions. */
  maxSpeedMPerS: number;
  /** Gravity along -y (0 for none). */
  gravityMPerS2: number;
}

/** One disc of a snapshot scene, as exported from a game. */
export interface SnapshotBody {
  xM: number;
  yM: number;
  vxMPerS: number;
  vyMPerS: number;
  massKg: number;
  radiusM: number;
  /** Angular velocity (rad/s, counter-clockwise positive); absent: 0. */
  omegaRadPerS?: number;
}

/**
 * A static wall: the half-plane normal · p ≥ offsetM is free space, the line normal · p = offsetM
 * its surface (the box scene's four walls are of this form). The normal need not have unit length:
 * the engine normalises it (offsetM is then divided by its length).
 */
export interface SnapshotWall {
  normalX: number;
  normalY: number;
  offsetM: number;
}

/** Discs and static walls exactly as a game exported them (a custom scene). */
export interface SnapshotScene {
  kind: "snapshot";
  bodies: SnapshotBody[];
  walls: SnapshotWall[];
  /** Gravity along -y (0 for none). */
  gravityMPerS2: number;
  /** Multiplies every initial velocity (1 runs the snapshot as exported). */
  speedScale: number;
}

/**
 * One body released on an incline: the line through the origin rising at `angleDeg` to the right
 * (free space above), gravity along −y. The body starts resting on it at its static overlap, or
 * moving down the slope.
 */
export interface SlopeScene {
  kind: "slope";
  massKg: number;
  radiusM: number;
  /** Incline angle from the horizontal, [0, 90). */
  angleDeg: number;
  /** Initial speed down the slope (≥ 0). */
  speedMPerS: number;
  /** Initial angular velocity (rad/s, counter-clockwise positive; rolling down the slope is clockwise, negative). */
  spinRadPerS: number;
  gravityMPerS2: number;
  /** "disc": a solid disc that can roll; "crate": rotation held (the body can only stick or slide). */
  body: "disc" | "crate";
}

/**
 * A tower of `count` discs resting on the floor (y = 0) in a channel a little wider than a disc,
 * each disc shifted sideways by a seeded amount up to `perturbationFraction` of its radius, all
 * starting at rest at their static overlaps.
 */
export interface StackScene {
  kind: "stack";
  count: number;
  massKg: number;
  radiusM: number;
  gravityMPerS2: number;
  /** Largest sideways shift of a disc, as a fraction of its radius, in [0, 0.5]. */
  perturbationFraction: number;
}

export type Scene = PairScene | WallScene | RowScene | BoxScene | SnapshotScene | SlopeScene | StackScene;
export type SceneKind = Scene["kind"];

export type Damping =
  | { kind: "none" }
  /** linear: c in N·s/m; hertz (Tsuji-type): η in N·s/m^(5/4), force −η·δ^(1/4)·δ̇. */
  | { kind: "coefficient"; value: number }
  /** Target coefficient of restitution e in (0, 1], converted by the engine. */
  | { kind: "restitution"; value: number };

/**
 * Tangential contact (lib/physics/tangential.ts): Cundall–Strack spring and dashpot capped by
 * Coulomb's limit. Absent or coefficient 0 (and no rolling resistance): frictionless, no rotation.
 */
export interface FrictionSpec {
  /** Sliding friction coefficient μ (dimensionless, ≥ 0). */
  coefficient: number;
  /** Static coefficient μ_s ≥ μ; absent: μ_s = μ. */
  staticCoefficient?: number;
  /** k_t as a multiple of the normal stiffness (for Hertz: of dF/dδ); absent and no `stiffness`: DEFAULT_TANGENTIAL_STIFFNESS_RATIO. */
  stiffnessRatio?: number;
  /** Given k_t (N/m); overrides the ratio. */
  stiffness?: number;
  /** Tangential damping ratio ζ_t (c_t = 2ζ_t√(m_t·k_t)); absent: 0. */
  dampingRatio?: number;
}

export interface ContactSpec {
  model: ContactModelName;
  /** linear: k in N/m. hertz: k_H in N/m^(3/2), used when `material` is absent. */
  stiffness?: number;
  /** hertz only: k_H derived from Young's modulus and Poisson ratio (and the radii). */
  material?: { youngsModulusPa: number; poissonRatio: number };
  /**
   * hertz with `material` only: what the walls are. "disc-material" (absent: the same) — a wall of
   * the discs' material, 1/E* = 2(1 − ν²)/E; "rigid" — a wall that does not deform, 1/E* = (1 − ν²)/E
   * (Johnson 1985, Contact Mechanics, §4.2), so k_H at a wall doubles.
   */
  wall?: "disc-material" | "rigid";
  damping: Damping;
  friction?: FrictionSpec;
  /** Rolling resistance coefficient μ_r (dimensionless; torque μ_r·R·F_n); absent: none. */
  rollingResistance?: number;
}

export interface Tolerances {
  /** Energy gain (relative) above which a run is "energy-drift". */
  energyDriftRel: number;
  /** Maximum overlap as a fraction of the smaller radius above which a run is "deep-overlap". */
  maxOverlapFraction: number;
  /** Energy growth factor (relative to the initial energy) treated as a blow-up; the run stops there. */
  blowUpEnergyFactor: number;
  /**
   * Verdict rules 2 (absent: DEFAULT_TOLERANCES). Amplification (rebound speed over the model's)
   * above which an isolated contact is "step-unstable".
   */
  amplificationLimit?: number;
  /** Verdict rules 2: relative deviation of the rebound from the model's restitution, either way, above which a run is "restitution-off". */
  restitutionRel?: number;
  /** Verdict rules 2: in-contact energy peak (maxEnergyErrorRel) above which a run is "coarse-contact". */
  energyPeakRel?: number;
  /** Verdict rules 2: a contact resolved in fewer integrator steps than this is "coarse-contact". */
  minStepsPerContact?: number;
  /** Slope and stack scenes: largest speed (m/s) a body that should rest may keep at the end of the run before it is "jitter". */
  restSpeedMPerS?: number;
  /** Slope scene: distance, as a fraction of the radius, a held body may move in the second half of the run before it is "creep". */
  creepFraction?: number;
  /** Slope and stack scenes: resting overlap at the end of the run, as a fraction of the radius, beyond which it is "sinking". */
  restingOverlapFraction?: number;
}

export interface Scenario {
  scene: Scene;
  contact: ContactSpec;
  integrator: IntegratorName;
  /** Frame step. */
  dtS: number;
  /** Substeps per frame step (integer ≥ 1); the integrator advances by dtS / substeps. */
  substeps: number;
  durationS: number;
  tolerances: Tolerances;
  /** Version of the verdict rules (VERDICT_RULES_VERSIONS); absent: 1, the rules stored sweeps were judged by. */
  verdictRules?: number;
  /** Seed of the one random generator (box scene positions and velocities; unused by the other scenes). */
  seed: number;
}

export interface Metrics {
  /**
   * (P_end − P_start − J_external) / |P_start| per component (|P_start| falls back to Σ m|v| when
   * the total is 0, then to 1 N·s), where J_external is the impulse of walls and gravity over the
   * run: the change of momentum that the forces do not explain. Zero up to rounding for a correct
   * integrator in every scene.
   */
  momentumDriftRelX: number;
  momentumDriftRelY: number;
  /** (E_end − E_start) / E_start, E = kinetic + contact potential (+ m·g·y with gravity). */
  energyErrorRel: number;
  /** max over the run of (E(t) − E_start) / E_start. */
  maxEnergyErrorRel: number;
  /** Normal restitution measured from the relative normal velocity after vs before the first contact; null if no contact ended. */
  effectiveRestitution: number | null;
  /** Maximum overlap over the run as a fraction of the smaller radius of the overlapping pair. */
  maxOverlapFraction: number;
  /** Duration of the first contact (s); null if no contact ended within the run. */
  contactDurationS: number | null;
  /** Integrator steps (substeps) with at least one overlapping pair. */
  contactSteps: number;
  tunneled: boolean;
  exploded: boolean;
  /**
   * Largest ω·h any contact saw, with ω = √(K/m_eff) from the contact's current stiffness K (k for
   * linear, dF/dδ = (3/2)·k_H·√δ for Hertz) and h the integrator step; null without contact. The
   * symplectic integrators are unstable on a linear spring for ω·h ≥ 2.
   */
  maxOmegaH: number | null;
  /**
   * Rebound of the first contact against the model: (|v_out|/|v_in|) / e_model for the normal
   * relative speed (1: the model's restitution exactly); pair and wall scenes only (in a row or a
   * box the first contact's bodies are pushed by neighbours); null if no contact ended.
   */
  amplification: number | null;
  /** Integrator steps actually taken or skipped over analytically (counts as duration / (dt/substeps) when the run completes). */
  steps: number;
  // Present only in runs with friction or rolling resistance (lib/physics/spin-metrics.ts).
  /**
   * (L_end − L_start − ∫τ_external dt) / |L_start|, L the angular momentum about the origin (orbital
   * plus spin) and τ_external the torque of walls and gravity about it: zero up to rounding for
   * symplectic Euler and velocity Verlet.
   */
  angularMomentumDriftRel?: number;
  /** Largest ω_t·h of any tangential spring, ω_t = √(k_t/m_t) with m_t the effective tangential mass; null without contact. */
  maxTangentialOmegaH?: number | null;
  /** Integrator steps with at least one sliding contact. */
  slidingSteps?: number;
  /** Pair and wall scenes: slip velocity at the contact point when the first contact ended (0: rolling). */
  endSlipMPerS?: number | null;
  /** Pair and wall scenes: angular velocity of the first contact's first body when it ended. */
  reboundSpinRadPerS?: number | null;
  /** Pair and wall scenes: angle of the rebound (relative) velocity from the contact normal, degrees, same side as the incidence positive. */
  reboundAngleDeg?: number | null;
  // Present only in the slope and stack scenes (bodies that should come to rest).
  /** First time after which the kinetic energy (with spin) stayed below SETTLE_ENERGY_FRACTION of Σ m·g·r; null if it never did. */
  settleTimeS?: number | null;
  /** Mean kinetic energy (with spin) over the last quarter of the run (J). */
  residualKineticJ?: number;
  /** Largest speed of any body over the last quarter of the run (m/s). */
  residualMaxSpeedMPerS?: number;
  /** Slope: distance moved along the slope in the second half of the run (m). */
  creepM?: number;
  /** Deepest contact overlap at the end of the run, as a fraction of the radius. */
  restingOverlapFraction?: number;
  /** That overlap over the static overlap the model predicts (m·g/k for linear, per body supported): 1 for a correct rest. */
  restingOverlapRatio?: number | null;
}

export interface TimeSeries {
  /** Sample times (s). */
  tS: number[];
  /** Per body, per sample. */
  /** Per body, per sample; angle and angular velocity only in runs with friction or rolling resistance. */
  bodies: { xM: number[]; yM: number[]; pxNs: number[]; pyNs: number[]; angleRad?: number[]; omegaRadPerS?: number[] }[];
  totalPxNs: number[];
  totalPyNs: number[];
  kineticJ: number[];
  potentialJ: number[];
  totalJ: number[];
  /** Largest overlap among all pairs (m). */
  maxOverlapM: number[];
  /** Runs with friction: contacts sliding and sticking at each sample (the replay's stick/slide state). */
  slidingContacts?: number[];
  stickingContacts?: number[];
  /** Runs with friction: the largest slip speed |v_t| at a sliding contact at each sample (m/s; 0 when none slides). */
  slipMPerS?: number[];
  /**
   * Runs with friction: per sample, the contacts as flat (body, other, sliding) triples, at most
   * SERIES_MAX_CONTACTS of them: other ≥ 0 is a body, other < 0 the scene's wall −1 − other; sliding 1 or 0.
   */
  frictionContacts?: number[][];
}

export interface RunResult {
  metrics: Metrics;
  verdict: Verdict;
  /** Why the verdict (short, human readable; e.g. "energy grew ×1e6 at t = 0.12 s"). */
  reason: string;
  /**
   * The run's work units (./work-units.ts): a deterministic integer count of the work done, the
   * basis of billing. Not part of the stored results.
   */
  workUnits: number;
  /** What the work units were counted from. */
  work: WorkCounts;
  series?: TimeSeries;
}

/** The work of one run, as counted by the engine (lib/physics/work-units.ts prices it). */
export interface WorkCounts {
  bodies: number;
  walls: number;
  /** The grid broad phase (else every pair is examined). */
  grid: boolean;
  hertz: boolean;
  /** Steps integrated (force pass and integrator). */
  integratedSteps: number;
  /** Contacts evaluated over the integrated steps, at most contactCap per step. */
  chargedContacts: number;
  /** Free-flight look-aheads (time to the next contact). */
  flightChecks: number;
  /** Steps advanced by the free-flight shortcut before a contact (positions added step by step). */
  flightSteps: number;
  /** Jumps to the end of the run after the last contact (one product per body). */
  finalFlights: number;
}

export interface RunOptions {
  /** Record a time series with at most this many samples (evenly spaced in steps). 0 or absent: none. */
  maxSamples?: number;
  /**
   * "fast" (default): free flight of small gravity-free scenes is advanced without force passes or
   * bookkeeping to just before the next contact, and a run ends in one jump once no further
   * contact is possible (the skipped steps still count).
   * "plain": every step is integrated (reference for tests and benchmarks). Both give byte-identical
   * metrics; series positions after the last contact may differ in the last bits.
   */
  stepping?: "fast" | "plain";
  /**
   * How contacting pairs are found: "grid" (uniform grid, cost ~linear in bodies; default for the
   * box scene and rows longer than 64) or "all-pairs" (every pair each step; default otherwise).
   * Both give byte-identical results.
   */
  broadPhase?: "grid" | "all-pairs";
}
