/**
 * What the main thread sends a worker thread and what it gets back. Shared by
 * workers/chunk-worker.ts, the pool and the server's queue runner; plain data
 * and typed arrays only (it crosses threads by structured clone).
 */
import { simulate } from "../physics/index";
import { createRunScratch } from "../physics/simulate";
import type { Scenario } from "../physics/types";
import { scenarioKey } from "./cell-key";
import { expandAxes, forEachCellInRange, type SweepCell } from "./grid";
import { KEY_WORDS, PackedView, PackedWriter, withKeys as packedWithKeys } from "./packed";
import type { CellResult } from "./results";
import type { SweepSpec } from "./spec";

export type ChunkTask =
  /**
   * A contiguous run of a sweep's cells, expanded inside the worker (small messages); `skip`
   * lists cells of the range (ascending) that are not run, e.g. those already in the cache.
   */
  | { kind: "range"; chunkIndex: number; spec: SweepSpec; firstCell: number; cellCount: number; skip?: Int32Array; keys?: boolean }
  /** Explicit cells (the warm-up, tests). */
  | { kind: "cells"; chunkIndex: number; cells: { index: number; axisValues: (number | string)[]; scenario: Scenario }[]; keys?: boolean }
  /**
   * Key a stored run after the fact (the queue runs chunks without keys and keys them while the
   * pool is idle): `packed` comes back with every cell's scenario key; nothing is simulated.
   */
  | { kind: "keys"; chunkIndex: number; spec: SweepSpec; packed: Uint8Array };

/**
 * A chunk's results, packed by the worker (lib/sweeps/packed.ts) into one byte array that
 * crosses back to the main thread as a single copy and is stored as it is: the main thread
 * builds nothing per cell. `unpackResults` turns it into CellResult records when needed.
 */
export interface ChunkOutcome {
  chunkIndex: number;
  /** Cells run (the range less its skipped cells). */
  cellCount: number;
  /** The results in index order, packed; with scenario keys when the task asked for them. */
  packed: Uint8Array;
  /**
   * The work units of the cells run (lib/physics/work-units.ts): deterministic, the basis of the
   * bill (lib/sweeps/metering.ts). Zero for a keys task.
   */
  workUnits: number;
  /** Wall time the worker thread spent on this chunk; integer ms, rounded up. Capacity planning only: never billed. */
  wallMs: number;
  /** The same, in integer nanoseconds (for calibration and benchmarks). */
  wallNs: number;
}

function cellCountOf(task: Exclude<ChunkTask, { kind: "keys" }>): number {
  return task.kind === "cells" ? task.cells.length : task.cellCount - (task.skip?.length ?? 0);
}

/**
 * The scenario keys of a sweep's cells `indices` (ascending), 4 words a cell in that order: each
 * run of consecutive indices is expanded once.
 */
export function keysOfCells(spec: SweepSpec, indices: ArrayLike<number>): Uint32Array {
  const keys = new Uint32Array(indices.length * KEY_WORDS);
  const axes = expandAxes(spec);
  let n = 0;
  while (n < indices.length) {
    let last = n;
    while (last + 1 < indices.length && indices[last + 1] === indices[last] + 1) last++;
    let slot = n;
    forEachCellInRange(spec, axes, indices[n], last - n + 1, (cell) => scenarioKey(cell.scenario, keys, slot++ * KEY_WORDS));
    n = last + 1;
  }
  return keys;
}

function forEachCell(task: Exclude<ChunkTask, { kind: "keys" }>, visit: (cell: SweepCell) => void): void {
  if (task.kind === "cells") {
    task.cells.forEach(visit);
    return;
  }
  const skip = task.skip;
  if (!skip || skip.length === 0) {
    forEachCellInRange(task.spec, expandAxes(task.spec), task.firstCell, task.cellCount, visit);
    return;
  }
  let next = 0;
  forEachCellInRange(task.spec, expandAxes(task.spec), task.firstCell, task.cellCount, (cell) => {
    if (next < skip.length && skip[next] === cell.index) next++;
    else visit(cell);
  });
}

/**
 * Run every cell of a chunk through the engine, adding up the cells' work units (what is billed).
 * The wall clock covers expansion, simulation, keying and packing, for capacity planning; it
 * starts when the task arrives.
 */
export function runChunkTask(task: ChunkTask): ChunkOutcome {
  const started = process.hrtime.bigint();
  if (task.kind === "keys") {
    const view = new PackedView(task.packed);
    const packed = view.hasKeys ? task.packed : packedWithKeys(view, keysOfCells(task.spec, view.indices));
    const wallNs = Number(process.hrtime.bigint() - started);
    return { chunkIndex: task.chunkIndex, cellCount: view.count, packed, workUnits: 0, wallMs: Math.ceil(wallNs / 1e6), wallNs };
  }
  const count = cellCountOf(task);
  const writer = new PackedWriter(count);
  const withKeys = task.keys === true;
  writer.hasKeys = withKeys;
  let workUnits = 0;
  // The chunk's cells run one after another on this thread and share one scratch.
  const scratch = createRunScratch();
  forEachCell(task, (cell) => {
    let run;
    try {
      run = simulate(cell.scenario, {}, scratch);
    } catch (error) {
      const message = error instanceof Error ? error.message : String(error);
      throw new Error(`cell ${cell.index} of chunk ${task.chunkIndex} failed in the engine: ${message}`);
    }
    workUnits += run.workUnits;
    if (withKeys) scenarioKey(cell.scenario, writer.keys, writer.next * KEY_WORDS);
    writer.add(cell.index, run.verdict, run.reason, run.metrics);
  });
  const packed = writer.finish();
  const wallNs = Number(process.hrtime.bigint() - started);
  return { chunkIndex: task.chunkIndex, cellCount: count, packed, workUnits, wallMs: Math.ceil(wallNs / 1e6), wallNs };
}

/** CellResult records of a packed outcome; `axisValuesOf` gives each cell's axis values. */
export function unpackResults(outcome: Pick<ChunkOutcome, "packed">, axisValuesOf: (index: number) => (number | string)[]): CellResult[] {
  const view = new PackedView(outcome.packed);
  const results: CellResult[] = new Array(view.count);
  for (let n = 0; n < view.count; n++) results[n] = view.result(n, axisValuesOf);
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
