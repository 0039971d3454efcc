/**
 * JSON views of sweeps and cells, as the API answers them. Cells are written with a fixed key
 * order (metrics in METRIC_KEYS order), so the same results give the same bytes however the
 * sweep was chunked, restarted or served from the cache.
 */
import { and, asc, count, eq } from "drizzle-orm";
import type { DbOrTx } from "@/db/client";
import { sweepCells, type Sweep } from "@/db/schema";
import { VERDICTS, type Metrics, type Verdict } from "@/lib/physics/types";
import { axisValuesAt, expandAxes, type ExpandedAxis } from "@/lib/sweeps/grid";
import { METRIC_KEYS, emptyVerdictCounts, type CellResult, type VerdictCounts } from "@/lib/sweeps/results";
import type { SweepSpec } from "@/lib/sweeps/spec";

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
  status: Sweep["status"];
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

export function axisViews(spec: SweepSpec, axes: readonly ExpandedAxis[] = expandAxes(spec)): SweepAxisView[] {
  return axes.map((axis, i) => ({
    path: axis.parameter,
    label: axis.label,
    unit: axis.unit,
    spacing: spec.axes[i].values ? "list" : (spec.axes[i].spacing ?? "linear"),
    values: axis.values,
  }));
}

export async function verdictCountsOf(db: DbOrTx, sweepId: string): Promise<VerdictCounts> {
  const rows = await db
    .select({ verdict: sweepCells.verdict, n: count() })
    .from(sweepCells)
    .where(eq(sweepCells.sweepId, sweepId))
    .groupBy(sweepCells.verdict);
  const counts = emptyVerdictCounts();
  for (const row of rows) if ((VERDICTS as readonly string[]).includes(row.verdict)) counts[row.verdict as Verdict] = Number(row.n);
  return counts;
}

export async function sweepView(db: DbOrTx, sweep: Sweep): Promise<SweepView> {
  const spec = sweep.spec as SweepSpec;
  return {
    id: sweep.id,
    name: sweep.name,
    status: sweep.status,
    reason: sweep.reason,
    createdAt: sweep.createdAt.toISOString(),
    startedAt: sweep.startedAt?.toISOString() ?? null,
    finishedAt: sweep.finishedAt?.toISOString() ?? null,
    cells: sweep.cells,
    cellsDone: sweep.cellsDone,
    cachedCells: sweep.cachedCells,
    chunks: sweep.chunks,
    chunksDone: sweep.chunksDone,
    computeMs: sweep.computeMs,
    estimatedComputeMs: sweep.estimatedComputeMs,
    verdictCounts: await verdictCountsOf(db, sweep.id),
    axes: axisViews(spec),
    spec,
  };
}

/** Metrics as stored (jsonb) back in the contract's fixed key order. */
export function orderedMetrics(stored: unknown): Metrics {
  const record = (stored ?? {}) as Record<string, unknown>;
  const out: Record<string, unknown> = {};
  for (const key of METRIC_KEYS) out[key] = record[key] ?? null;
  return out as unknown as Metrics;
}

/** What is stored for a cell's metrics: non-finite numbers as null (JSON has no NaN), −0 as 0. */
export function storableMetrics(metrics: Metrics): Record<string, number | boolean | null> {
  const out: Record<string, number | boolean | null> = {};
  const record = metrics as unknown as Record<string, number | boolean | null>;
  for (const key of METRIC_KEYS) {
    const value = record[key];
    out[key] = typeof value === "number" ? (Number.isFinite(value) ? (Object.is(value, -0) ? 0 : value) : null) : (value ?? null);
  }
  return out;
}

/** The sweep's finished cells in index order, as CellResult records. */
export async function storedCells(db: DbOrTx, sweep: Sweep, onlyIndex?: number): Promise<CellResult[]> {
  const spec = sweep.spec as SweepSpec;
  const axes = expandAxes(spec);
  const where = onlyIndex === undefined ? eq(sweepCells.sweepId, sweep.id) : and(eq(sweepCells.sweepId, sweep.id), eq(sweepCells.cellIndex, onlyIndex));
  const rows = await db.select().from(sweepCells).where(where).orderBy(asc(sweepCells.cellIndex));
  return rows.map((row) => ({
    index: row.cellIndex,
    axisValues: axisValuesAt(axes, row.cellIndex),
    metrics: orderedMetrics(row.metrics),
    verdict: row.verdict as Verdict,
    reason: row.reason,
  }));
}

export function cellJson(cell: CellResult): { index: number; axisValues: (number | string)[]; metrics: Metrics; verdict: Verdict; reason: string } {
  return { index: cell.index, axisValues: cell.axisValues, metrics: cell.metrics, verdict: cell.verdict, reason: cell.reason };
}
