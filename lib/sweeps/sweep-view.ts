/**
 * A sweep as the API answers it (one sweep, the list, cancel, rerun): built on the server by
 * lib/queue/views.ts, read in the browser through components/sweeps/sweep-api.ts. Types only, so
 * the pages importing it take nothing of the server into their bundle.
 */
import type { SweepStatus } from "./status";
import type { VerdictCounts } from "./results";
import type { SweepSpec } from "./spec";

export type { SweepStatus };

/** One axis of a sweep with its values expanded, in the spec's order. */
export interface SweepAxisView {
  path: string;
  label: string;
  unit: string;
  spacing: "linear" | "log" | "list";
  values: (number | string)[];
}

export interface SweepView {
  id: string;
  name: string;
  status: SweepStatus;
  reason: string | null;
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
  cells: number;
  cellsDone: number;
  cachedCells: number;
  chunks: number;
  chunksDone: number;
  /** Billed so far (ms). */
  computeMs: number;
  /** The quote's expected bill (ms). */
  estimatedComputeMs: number;
  /** The quote's ceiling (ms): the most the sweep can be billed (0 for sweeps metered by wall clock, which had none). */
  ceilingMs: number;
  /** How the sweep is billed: "wall-clock" (submitted before work units) or "work-units-v1". */
  metering: string;
  verdictCounts: VerdictCounts;
  axes: SweepAxisView[];
  spec: SweepSpec;
  /** For a "re-run at a finer dt": the sweep and cell it re-runs (null otherwise, or once that sweep is deleted). */
  rerunOf: { sweepId: string; cellIndex: number } | null;
}
