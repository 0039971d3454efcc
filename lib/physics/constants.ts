import type { Tolerances } from "./types";

/**
 * Default verdict tolerances, each with its basis (docs/sweep-spec.md "Verdict rules" repeats them):
 * - energyDriftRel 0.01: common practice in games (a scene may gain 1 % of its energy over a run
 *   before a player sees things speed up); our choice, not from a published source.
 * - maxOverlapFraction 0.1: common practice in games (a sink of a tenth of the smaller radius is
 *   where discs start to look interpenetrated on screen); our choice. Engineering DEM keeps overlaps
 *   far smaller, and a spec may lower it.
 * - blowUpEnergyFactor 1000: common practice (a thousand-fold energy growth is a blow-up whatever
 *   the scene); the run stops there.
 * - amplificationLimit 2: our choice. A contact that sends the bodies apart more than twice as fast
 *   as the model's restitution says (four times the rebound energy) reads as an explosion in a game.
 *   On the one-sided linear contact, symplectic Euler and velocity Verlet reach it only within about
 *   15 % of ω·h = 2 (measured: worst rebound 1.89 at ω·h = 1.7, 2.24 at 1.8; tests/unit/physics/
 *   step-stability.test.ts), so the amplification and the ω·h bound agree to within a grid cell.
 * - restitutionRel 0.05: our choice (common practice in games: a bounce within ±5 % of the tuned
 *   speed, ±10 % of its energy, is not told apart in play). Relative, checked in both directions.
 * - energyPeakRel 0.5: our choice; the staggered energy symplectic Euler shows inside a contact
 *   peaks about ω·h/2 above the start (measured 0.50 at ω·h = 1), so 0.5 matches minStepsPerContact.
 * - restSpeedMPerS 0.01: our choice (a resting crate still moving 1 cm/s at the end shimmers on screen).
 * - creepFraction 0.01: our choice (a held crate that slides a hundredth of its size in half the run visibly walks off over a level).
 * - restingOverlapFraction 0.02: common practice in games (a resting body sunk 2 % of its size into the floor shows as a lost gap); our choice.
 * - minStepsPerContact 3: common practice in games (fewer than three steps cannot show compression
 *   and release; engineering DEM resolves a contact in tens of steps, from memory); our choice. A linear contact lasts π/ω, about 3 steps at ω·h = 1.
 */
export const DEFAULT_TOLERANCES: Readonly<Required<Tolerances>> = Object.freeze({
  energyDriftRel: 0.01,
  maxOverlapFraction: 0.1,
  blowUpEnergyFactor: 1e3,
  amplificationLimit: 2,
  restitutionRel: 0.05,
  energyPeakRel: 0.5,
  minStepsPerContact: 3,
  restSpeedMPerS: 0.01,
  creepFraction: 0.01,
  restingOverlapFraction: 0.02,
});

/**
 * ω·h at and above which a contact is "step-unstable" (verdict rules 2): the linear stability bound
 * of symplectic Euler and velocity (Störmer–)Verlet on the harmonic oscillator, whose one-step
 * matrix has trace 2 − (ω·h)² and determinant 1, so its eigenvalues leave the unit circle when
 * |2 − (ω·h)²| > 2 (Hairer, Lubich & Wanner, Geometric Numerical Integration, 2nd ed., 2006).
 */
export const STEP_STABILITY_LIMIT_OMEGA_H = 2;

/** Scenes with at most this many bodies (and no gravity) skip free flight analytically. */
export const MAX_BODIES_FOR_FREE_FLIGHT_JUMPS = 64;

/** Largest box scene the engine accepts. */
export const MAX_BOX_DISCS = 10_000;

/**
 * Largest initial overlap a snapshot scene accepts between two discs or a disc and a wall, as a
 * fraction of the smaller radius: exports of resting stacks carry overlaps of solver slop; more
 * than this starts with a stored spring force the game did not have (common practice).
 */
export const SNAPSHOT_OVERLAP_TOLERANCE = 0.01;

/**
 * k_t/k_n when a friction spec gives neither a ratio nor k_t: 2/7, the lower end of the range
 * common practice uses (2/7 to 1); for a solid sphere it makes the tangential and normal
 * oscillations equally fast (common practice).
 */
export const DEFAULT_TANGENTIAL_STIFFNESS_RATIO = 2 / 7;

/** Largest stack scene the engine accepts. */
export const MAX_STACK_DISCS = 1000;

/**
 * A slope or stack scene has settled once its kinetic energy (with spin) stays below this fraction
 * of Σ m·g·r (the energy of lifting every body by its radius): our choice, far below any motion
 * a player sees.
 */
export const SETTLE_ENERGY_FRACTION = 1e-6;

/** Half-width of the stack scene's channel beyond the disc radius and its perturbation, as a fraction of the radius (our choice: room to shift, no room to fall). */
export const STACK_CHANNEL_CLEARANCE_FRACTION = 0.05;
