/**
 * Chunking: the cells of a sweep cut into contiguous index ranges of about a
 * target predicted compute time. A chunk is the unit of work a worker thread
 * runs and the unit the ledger bills. Chunks are numbered 0, 1, … in cell
 * order, and the plan depends only on the spec and the options, so it is the
 * same on every run.
 *
 * Pure: safe to import in the browser.
 */
import { CALIBRATION, DEFAULT_TARGET_CHUNK_MS, oneOffKey, predictCellNs, type CostConstants } from "./cost";
import { stepsPerCell } from "./axes";
import { cellCount, expandAxes, forEachScenarioInPlace, type ExpandedAxis } from "./grid";
import type { SweepSpec } from "./spec";

export interface ChunkPlan {
  index: number;
  /** First cell index (inclusive). */
  firstCell: number;
  /** Number of cells: the chunk covers [firstCell, firstCell + cellCount). */
  cellCount: number;
  /** Predicted compute of the chunk: its cells, its fixed overhead and one-off solves (integer ms, rounded up). */
  predictedMs: number;
}

export interface ChunkOptions {
  /** Predicted compute a chunk should reach before it is closed (ms). */
  targetChunkMs?: number;
  /** Upper bound on cells per chunk, whatever the prediction (bounds message sizes and retry waste). */
  maxCellsPerChunk?: number;
  constants?: CostConstants;
  axes?: readonly ExpandedAxis[];
}

export const DEFAULT_MAX_CELLS_PER_CHUNK = 4_096;

/**
 * Greedy in index order: add cells to the current chunk until its predicted
 * compute reaches the target or it holds maxCellsPerChunk cells. A single cell
 * predicted above the target gets a chunk of its own.
 */
export function planChunks(spec: SweepSpec, options: ChunkOptions = {}): ChunkPlan[] {
  return planChunksWithStats(spec, options).chunks;
}

/** planChunks, plus the largest predicted cell (ns) and the total integrator steps, from the same single pass over the cells. */
export function planChunksWithStats(spec: SweepSpec, options: ChunkOptions = {}): { chunks: ChunkPlan[]; largestCellNs: number; steps: number } {
  const targetNs = (options.targetChunkMs ?? DEFAULT_TARGET_CHUNK_MS) * 1e6;
  const maxCells = options.maxCellsPerChunk ?? DEFAULT_MAX_CELLS_PER_CHUNK;
  if (!(targetNs > 0)) throw new RangeError(`targetChunkMs must be > 0; got ${options.targetChunkMs}`);
  if (!Number.isInteger(maxCells) || maxCells < 1) throw new RangeError(`maxCellsPerChunk must be an integer ≥ 1; got ${maxCells}`);
  const constants = options.constants ?? CALIBRATION;
  const axes = options.axes ?? expandAxes(spec);
  const total = cellCount(axes);

  const chunks: ChunkPlan[] = [];
  let firstCell = 0;
  let cells = 0;
  let chunkNs = constants.chunkOverheadNs;
  const oneOffs = new Set<string>();
  const close = () => {
    chunks.push({ index: chunks.length, firstCell, cellCount: cells, predictedMs: Math.max(1, Math.ceil(chunkNs / 1e6)) });
    firstCell += cells;
    cells = 0;
    chunkNs = constants.chunkOverheadNs;
    oneOffs.clear();
  };
  let largestCellNs = 0;
  let steps = 0;
  // The cost model reads each scenario once: no per-cell copies (a 262,144-cell quote stays fast).
  forEachScenarioInPlace(spec, axes, 0, total, (_index, scenario) => {
    steps += stepsPerCell(scenario);
    const cellNs = predictCellNs(scenario, constants);
    if (cellNs > largestCellNs) largestCellNs = cellNs;
    chunkNs += cellNs;
    const oneOff = oneOffKey(scenario);
    if (oneOff !== null && !oneOffs.has(oneOff)) {
      oneOffs.add(oneOff);
      chunkNs += constants.hertzRestitutionSolveNs;
    }
    cells++;
    if (chunkNs >= targetNs || cells >= maxCells) close();
  });
  if (cells > 0) close();
  return { chunks, largestCellNs, steps };
}
