import type { Tolerances } from "./types";

/**
 * Default verdict tolerances (common practice for tuning game contacts, not derived from a source):
 * 1 % energy change, overlap up to 10 % of the smaller radius, and a thousand-fold energy growth
 * treated as a blow-up.
 */
export const DEFAULT_TOLERANCES: Readonly<Tolerances> = Object.freeze({
  energyDriftRel: 0.01,
  maxOverlapFraction: 0.1,
  blowUpEnergyFactor: 1e3,
});

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
