/**
 * What the main thread sends a worker thread and what it gets back. Shared by
 * workers/chunk-worker.ts, the pool and the server's queue runner; plain data
 * only (it crosses threads by structured clone).
 */
import { simulate } from "../physics/index";
import type { Scenario } from "../physics/types";
import { expandAxes, forEachCellInRange, type SweepCell } from "./grid";
import { pickMetrics, type CellResult } from "./results";
import type { SweepSpec } from "./spec";

export type ChunkTask =
  /** A contiguous run of a sweep's cells, expanded inside the worker (small messages). */
  | { kind: "range"; chunkIndex: number; spec: SweepSpec; firstCell: number; cellCount: number }
  /** Explicit cells, e.g. the cache misses of a sweep. */
  | { kind: "cells"; chunkIndex: number; cells: { index: number; axisValues: (number | string)[]; scenario: Scenario }[] };

export interface ChunkOutcome {
  chunkIndex: number;
  /** One result per cell, in the order the task gave the cells. */
  results: CellResult[];
  /** Worker time spent on this chunk, measured inside the worker thread; integer ms, rounded up. */
  computeMs: number;
  /** The same, in integer nanoseconds (for calibration and benchmarks). */
  computeNs: number;
}

function forEachCell(task: ChunkTask, visit: (cell: SweepCell) => void): void {
  if (task.kind === "cells") task.cells.forEach(visit);
  else forEachCellInRange(task.spec, expandAxes(task.spec), task.firstCell, task.cellCount, visit);
}

/**
 * Run every cell of a chunk through the engine. The clock covers expansion and
 * simulation, i.e. everything billed; it starts when the task arrives.
 */
export function runChunkTask(task: ChunkTask): ChunkOutcome {
  const started = process.hrtime.bigint();
  const results: CellResult[] = [];
  forEachCell(task, (cell) => {
    let run;
    try {
      run = simulate(cell.scenario);
    } catch (error) {
      const message = error instanceof Error ? error.message : String(error);
      throw new Error(`cell ${cell.index} of chunk ${task.chunkIndex} failed in the engine: ${message}`);
    }
    results.push({ index: cell.index, axisValues: cell.axisValues, verdict: run.verdict, reason: run.reason, metrics: pickMetrics(run.metrics) });
  });
  const computeNs = Number(process.hrtime.bigint() - started);
  return { chunkIndex: task.chunkIndex, results, computeMs: Math.ceil(computeNs / 1e6), computeNs };
}
