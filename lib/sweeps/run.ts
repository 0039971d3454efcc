/**
 * Run a whole sweep on a chunk pool: plan the chunks, submit them all (the
 * pool's p-queue bounds what is in flight), and hand the results on strictly in
 * cell order however the threads finish, so any thread count and any chunk
 * size produce the same bytes.
 *
 * Node only (uses the pool).
 */
import "server-only";
import { unpackResults, type ChunkOutcome } from "./chunk-task";
import { planChunks, type ChunkOptions, type ChunkPlan } from "./chunks";
import { axisValuesAt, cellCount, expandAxes, type ExpandedAxis } from "./grid";
import { specHash } from "./hash";
import { billedMsOfUnits } from "./metering";
import type { ChunkPool } from "./pool";
import { countVerdicts, emptyVerdictCounts, sweepMeasuresRotation, type CellResult, type ResultsHeader, type VerdictCounts } from "./results";
import type { SweepSpec } from "./spec";

export interface SweepProgress {
  chunksDone: number;
  chunks: number;
  cellsDone: number;
  cells: number;
  /** Billed compute so far (ms): ⌈work units of the chunks done / rate⌉. */
  billedMs: number;
}

export interface RunSweepOptions extends ChunkOptions {
  pool: ChunkPool;
  /** A chunk plan already made for this spec (e.g. the quote's); planned from the options otherwise. */
  plan?: ChunkPlan[];
  /** Called with consecutive runs of results, in cell order (each cell exactly once). */
  onResults?: (results: readonly CellResult[]) => void;
  /** Called after each chunk finishes (in completion order). */
  onProgress?: (progress: SweepProgress) => void;
}

export interface SweepRunSummary {
  header: ResultsHeader;
  chunks: ChunkPlan[];
  verdictCounts: VerdictCounts;
  /** Work units of all cells run (lib/physics/work-units.ts). */
  workUnits: number;
  /** What the sweep is billed: ⌈workUnits / WORK_UNITS_PER_BILLED_MS⌉ ms, the same for any chunking and thread count. */
  billedMs: number;
  /** Work units per chunk, by chunk index. */
  chunkWorkUnits: number[];
  /** Sum of the chunks' worker wall time (integer ms; capacity figures, not billed). */
  wallMs: number;
  /** Wall time per chunk, by chunk index (integer ms). */
  chunkWallMs: number[];
  /** The same in ns, for calibration. */
  chunkWallNs: number[];
}

export function resultsHeader(spec: SweepSpec, axes: readonly ExpandedAxis[] = expandAxes(spec)): ResultsHeader {
  const header: ResultsHeader = { name: spec.name, specHash: specHash(spec), verdictRules: spec.scenario.verdictRules ?? 1, axes, cellCount: cellCount(axes) };
  if (sweepMeasuresRotation(spec, axes)) header.rotationMetrics = true;
  return header;
}

export async function runSweep(spec: SweepSpec, options: RunSweepOptions): Promise<SweepRunSummary> {
  const axes = options.axes ?? expandAxes(spec);
  const header = resultsHeader(spec, axes);
  const chunks = options.plan ?? planChunks(spec, { ...options, axes });
  const verdictCounts = emptyVerdictCounts();
  const chunkWorkUnits: number[] = new Array(chunks.length).fill(0);
  const chunkWallMs: number[] = new Array(chunks.length).fill(0);
  const chunkWallNs: number[] = new Array(chunks.length).fill(0);

  // Reorder buffer: chunks finish in any order; results leave in chunk (= cell) order.
  const finished = new Map<number, CellResult[]>();
  let nextChunk = 0;
  let chunksDone = 0;
  let cellsDone = 0;
  let workUnits = 0;
  let wallMs = 0;
  let failed = false;

  const accept = (outcome: ChunkOutcome) => {
    const plan = chunks[outcome.chunkIndex];
    const results = unpackResults(outcome, (index) => axisValuesAt(axes, index));
    if (results.length !== plan.cellCount || results[0]?.index !== plan.firstCell) {
      throw new Error(`chunk ${plan.index} returned ${results.length} results from cell ${results[0]?.index} for ${plan.cellCount} cells from ${plan.firstCell}`);
    }
    finished.set(outcome.chunkIndex, results);
    chunkWorkUnits[outcome.chunkIndex] = outcome.workUnits;
    chunkWallMs[outcome.chunkIndex] = outcome.wallMs;
    chunkWallNs[outcome.chunkIndex] = outcome.wallNs;
    workUnits += outcome.workUnits;
    wallMs += outcome.wallMs;
    chunksDone++;
    cellsDone += plan.cellCount;
    while (finished.has(nextChunk)) {
      const results = finished.get(nextChunk) as CellResult[];
      finished.delete(nextChunk);
      countVerdicts(results, verdictCounts);
      options.onResults?.(results);
      nextChunk++;
    }
    options.onProgress?.({ chunksDone, chunks: chunks.length, cellsDone, cells: header.cellCount, billedMs: billedMsOfUnits(workUnits) });
  };

  // On the first failure, drop the chunks still waiting for a thread: the sweep has failed anyway.
  const abort = new AbortController();
  await Promise.all(
    chunks.map(async (plan) => {
      try {
        const outcome = await options.pool.run(
          { kind: "range", chunkIndex: plan.index, spec, firstCell: plan.firstCell, cellCount: plan.cellCount },
          { signal: abort.signal },
        );
        if (!failed) accept(outcome);
      } catch (error) {
        failed = true;
        abort.abort();
        throw error;
      }
    }),
  );
  return { header, chunks, verdictCounts, workUnits, billedMs: billedMsOfUnits(workUnits), chunkWorkUnits, wallMs, chunkWallMs, chunkWallNs };
}
