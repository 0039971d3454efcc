/**
 * Chunking: the cells of a sweep cut into contiguous index ranges of about a
 * target predicted compute time. A chunk is the unit of work a worker thread
 * runs and the unit the ledger bills. Chunks are numbered 0, 1, … in cell
 * order, and the plan depends only on the spec and the options, so it is the
 * same on every run.
 *
 * Pure: safe to import in the browser.
 */
import { CALIBRATION, DEFAULT_TARGET_CHUNK_MS, QUOTE_BAND, oneOffKey, predictCellNs, type CostConstants } from "./cost";
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

export interface SweepCostEstimate {
  cells: number;
  chunks: number;
  /** Predicted compute of the whole sweep, integer milliseconds (sum of the chunks' predictions). */
  computeMs: number;
  /** The largest predicted cell (ms, rounded up). */
  largestCellMs: number;
  /** computeMs × QUOTE_BAND: the range the billed compute is expected in. */
  bandMs: { low: number; high: number };
  /** The chunks the quote assumes (pass them to runSweep so the run is the one quoted). */
  plan: ChunkPlan[];
  /** Integrator steps of all cells. */
  steps: number;
}

/**
 * Predicted compute of a sweep as it will be chunked and billed: each chunk's cells, its fixed
 * overhead and its one-off solves, each chunk rounded up to whole ms as the worker bills it.
 */
export function predictSweep(spec: SweepSpec, options: ChunkOptions = {}): SweepCostEstimate {
  const axes = options.axes ?? expandAxes(spec);
  const { chunks, largestCellNs, steps } = planChunksWithStats(spec, { ...options, axes });
  const computeMs = chunks.reduce((sum, chunk) => sum + chunk.predictedMs, 0);
  return {
    cells: cellCount(axes),
    chunks: chunks.length,
    computeMs,
    largestCellMs: Math.ceil(largestCellNs / 1e6),
    bandMs: { low: Math.floor(computeMs * QUOTE_BAND.low), high: Math.ceil(computeMs * QUOTE_BAND.high) },
    plan: chunks,
    steps,
  };
}
