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

