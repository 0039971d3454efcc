/**
 * What the main thread sends a worker thread and what it gets back. Shared by
 * workers/chunk-worker.ts, the pool and the server's queue runner; plain data
 * and typed arrays only (it crosses threads by structured clone).
 */
import { simulate } from "../physics/index";
import { VERDICTS, type Metrics, type Scenario } from "../physics/types";
import { expandAxes, forEachCellInRange, type SweepCell } from "./grid";
import { METRIC_KEYS, type CellResult } from "./results";
import type { SweepSpec } from "./spec";

export type ChunkTask =
  /** A contiguous run of a sweep's cells, expanded inside the worker (small messages). */
  | { kind: "range"; chunkIndex: number; spec: SweepSpec; firstCell: number; cellCount: number }
  /** Explicit cells, e.g. the cache misses of a sweep. */
  | { kind: "cells"; chunkIndex: number; cells: { index: number; axisValues: (number | string)[]; scenario: Scenario }[] };

/**
 * A chunk's results, packed for the trip back to the main thread: typed arrays clone as one
 * copy each, where thousands of small result objects would be walked field by field (which
 * made result passing a serial bottleneck on the main thread). `unpackResults` turns it back
 * into CellResult records.
 */
export interface ChunkOutcome {
  chunkIndex: number;
  /** Cells in the chunk. */
  cellCount: number;
  /** Cell index per result, in the order the task gave the cells. */
  indices: Int32Array;
  /** Index into VERDICTS per result. */
  verdicts: Uint8Array;
  /** METRIC_KEYS.length numbers per result (booleans as 0/1, null as NaN with its bit in nullMask). */
  metrics: Float64Array;
  /** One bit per metric per result: set where the metric is null. */
  nullMask: Uint8Array;
  reasons: string[];
  /** Worker time spent on this chunk, measured inside the worker thread; integer ms, rounded up. */
  computeMs: number;
  /** The same, in integer nanoseconds (for calibration and benchmarks). */
  computeNs: number;
}

const METRIC_COUNT = METRIC_KEYS.length;
const MASK_BYTES_PER_CELL = Math.ceil(METRIC_COUNT / 8);
const BOOLEAN_METRICS: ReadonlySet<string> = new Set(["tunneled", "exploded"]);
const VERDICT_CODES = new Map(VERDICTS.map((verdict, code) => [verdict, code]));

function cellCountOf(task: ChunkTask): number {
  return task.kind === "cells" ? task.cells.length : task.cellCount;
}

function forEachCell(task: ChunkTask, visit: (cell: SweepCell) => void): void {
  if (task.kind === "cells") task.cells.forEach(visit);
  else forEachCellInRange(task.spec, expandAxes(task.spec), task.firstCell, task.cellCount, visit);
}

/**
 * Run every cell of a chunk through the engine. The clock covers expansion, simulation and
 * packing, i.e. everything billed; it starts when the task arrives.
 */
export function runChunkTask(task: ChunkTask): ChunkOutcome {
  const started = process.hrtime.bigint();
  const count = cellCountOf(task);
  const indices = new Int32Array(count);
  const verdicts = new Uint8Array(count);
  const metrics = new Float64Array(count * METRIC_COUNT);
  const nullMask = new Uint8Array(count * MASK_BYTES_PER_CELL);
  const reasons: string[] = new Array(count);
  let n = 0;
  forEachCell(task, (cell) => {
    let run;
    try {
      run = simulate(cell.scenario);
    } catch (error) {
      const message = error instanceof Error ? error.message : String(error);
      throw new Error(`cell ${cell.index} of chunk ${task.chunkIndex} failed in the engine: ${message}`);
    }
    indices[n] = cell.index;
    verdicts[n] = VERDICT_CODES.get(run.verdict) as number;
    reasons[n] = run.reason;
    const record = run.metrics as unknown as Record<string, number | boolean | null>;
    for (let m = 0; m < METRIC_COUNT; m++) {
      const value = record[METRIC_KEYS[m]];
      if (value === null) {
        metrics[n * METRIC_COUNT + m] = Number.NaN;
        nullMask[n * MASK_BYTES_PER_CELL + (m >> 3)] |= 1 << (m & 7);
      } else {
        metrics[n * METRIC_COUNT + m] = typeof value === "boolean" ? (value ? 1 : 0) : value;
      }
    }
    n++;
  });
  const computeNs = Number(process.hrtime.bigint() - started);
  return { chunkIndex: task.chunkIndex, cellCount: count, indices, verdicts, metrics, nullMask, reasons, computeMs: Math.ceil(computeNs / 1e6), computeNs };
}

/** CellResult records of a packed outcome; `axisValuesOf` gives each cell's axis values. */
export function unpackResults(outcome: ChunkOutcome, axisValuesOf: (index: number) => (number | string)[]): CellResult[] {
  const results: CellResult[] = new Array(outcome.cellCount);
  for (let n = 0; n < outcome.cellCount; n++) {
    const metrics: Record<string, number | boolean | null> = {};
    for (let m = 0; m < METRIC_COUNT; m++) {
      const key = METRIC_KEYS[m];
      const isNull = (outcome.nullMask[n * MASK_BYTES_PER_CELL + (m >> 3)] >> (m & 7)) & 1;
      const value = outcome.metrics[n * METRIC_COUNT + m];
      metrics[key] = isNull ? null : BOOLEAN_METRICS.has(key) ? value === 1 : value;
    }
    const index = outcome.indices[n];
    results[n] = { index, axisValues: axisValuesOf(index), verdict: VERDICTS[outcome.verdicts[n]], reason: outcome.reasons[n], metrics: metrics as unknown as Metrics };
  }
  return results;
}

const WARM_UP_TOLERANCES = { energyDriftRel: 0.01, maxOverlapFraction: 0.1, blowUpEnergyFactor: 1e3 };

/**
 * A small chunk touching every scene kind, run once per thread when a pool starts so that the
 * first billed chunk does not pay for the JIT compiling the engine. Its compute is not billed.
 * The cells vary (stiffness, speed, offset, integrator) so that the compiled code sees the
 * branches real grids take: deep overlaps, blow-ups, glancing and head-on contacts.
 */
export function warmUpTask(): ChunkTask {
  const base = { substeps: 1, durationS: 0.05, tolerances: WARM_UP_TOLERANCES, seed: 1 };
  const integrators = ["symplectic-euler", "velocity-verlet", "explicit-euler"] as const;
  const scenarios: Scenario[] = [];
  for (const integrator of integrators)
    for (const stiffness of [1e3, 1e4, 1e5, 1e6])
      for (const speed of [0.5, 3, 20])
        for (const offset of [0, 0.5, 0.9]) {
          const contact = { model: "linear" as const, stiffness, damping: { kind: "restitution" as const, value: 0.8 } };
          scenarios.push({ ...base, integrator, dtS: 1e-3, contact, scene: { kind: "pair", massAKg: 0.05, massBKg: 0.1, radiusAM: 0.02, radiusBM: 0.03, speedAMPerS: speed, speedBMPerS: 0, offsetFraction: offset, gapM: 0.005 } });
          scenarios.push({ ...base, integrator, dtS: 1e-4, contact: { model: "hertz", stiffness: stiffness * 1e3, damping: { kind: "none" } }, scene: { kind: "wall", massKg: 0.05, radiusM: 0.02, speedMPerS: speed, angleDeg: offset * 80, gapM: 0.005 } });
        }
  const linear = { model: "linear" as const, stiffness: 1e4, damping: { kind: "coefficient" as const, value: 0.1 } };
  // Compiles the engine's e → damping solver (e = 0.5 is then cached: a harmless head start).
  scenarios.push({ ...base, integrator: "velocity-verlet", dtS: 1e-4, contact: { model: "hertz", material: { youngsModulusPa: 1e9, poissonRatio: 0.3 }, damping: { kind: "restitution", value: 0.5 } }, scene: { kind: "wall", massKg: 0.1, radiusM: 0.02, speedMPerS: 2, angleDeg: 0, gapM: 0.005 } });
  for (const count of [4, 70]) scenarios.push({ ...base, integrator: "velocity-verlet", dtS: 1e-4, contact: linear, scene: { kind: "row", count, massKg: 0.1, radiusM: 0.02, strikerMassKg: 0.1, strikerSpeedMPerS: 2, spacingM: 0, gapM: 0.005 } });
  for (const gravity of [0, 9.81]) scenarios.push({ ...base, integrator: "velocity-verlet", dtS: 1e-3, contact: linear, scene: { kind: "box", count: 80, massKg: 0.1, radiusM: 0.02, widthM: 1, heightM: 1, maxSpeedMPerS: 1, gravityMPerS2: gravity } });
  return { kind: "cells", chunkIndex: -1, cells: scenarios.map((scenario, index) => ({ index, axisValues: [], scenario })) };
}
