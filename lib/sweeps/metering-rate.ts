/**
 * The published metering constants, apart from lib/sweeps/metering.ts so the browser (the quote
 * panel, the billing page) can show them without importing the engine.
 */
import { WORK_UNITS_VERSION } from "../physics/work-units";

/**
 * Work units per billed millisecond. Calibrated once (tests/bench/work-unit-calibration.ts, on the
 * reference machine: 2 cores, Node 20, one quiet thread) so that one billed minute is about one
 * minute of one worker thread there. Fixed: a change is a new METERING version.
 */
export const WORK_UNITS_PER_BILLED_MS = 1_000_000;

/** How a sweep is metered, stored on each sweep. Sweeps submitted before work units bill wall time. */
export const METERING_WALL_CLOCK = "wall-clock";
export const METERING_WORK_UNITS = `work-units-v${WORK_UNITS_VERSION}` as const;
export type Metering = typeof METERING_WALL_CLOCK | typeof METERING_WORK_UNITS;


/** When and how the billed unit is defined, as the billing page and the pricing section say it. */
export const METERING_SINCE = "2026-12-04";
export const METERING_NOTE =
  `Since ${METERING_SINCE}, sweeps are billed by work: the engine counts each cell's work units (integrator steps × bodies, pairs examined, contacts evaluated, free-flight steps at a lower rate), and ${WORK_UNITS_PER_BILLED_MS.toLocaleString("en-US")} work units make one billed millisecond, about a millisecond of one worker thread of our reference machine. The same sweep always costs the same, never more than its quote's ceiling; cached cells cost nothing. Sweeps submitted before then were billed worker wall time, and their ledger entries stay as they were.`;
