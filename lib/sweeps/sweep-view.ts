/**
 * A sweep as the API answers it (one sweep, the list, cancel, rerun): built on the server by
 * lib/queue/views.ts, read in the browser through components/sweeps/sweep-api.ts. Types only, so
 * the pages importing it take nothing of the server into their bundle.
 */
import type { SweepStatus } from "../../db/schema";
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
  computeMs: number;
  estimatedComputeMs: number;
  verdictCounts: VerdictCounts;
  axes: SweepAxisView[];
  spec: SweepSpec;
}
