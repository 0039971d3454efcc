/**
 * JSON views of sweeps and cells, as the API answers them, read from the packed results rows
 * (one per chunk). Cells are written with a fixed key order (metrics in METRIC_KEYS order), so
 * the same results give the same bytes however the sweep was chunked, restarted or served from
 * the cache.
 */
import "server-only";
import { and, asc, eq, gt, lte, sql } from "drizzle-orm";
import type { DbOrTx } from "@/db/client";
import { sweepChunks, sweepResults, type Sweep, type SweepResult } from "@/db/schema";
import { VERDICTS, type Metrics, type Verdict } from "@/lib/physics/types";
import { axisValuesAt, cellAt, expandAxes, type ExpandedAxis } from "@/lib/sweeps/grid";
import type { Scenario } from "@/lib/physics/types";
import { PackedView } from "@/lib/sweeps/packed";
import { CONTACT_CSV_COLUMNS, cellContactTuning, contactTuningCsv, contactTuningJson } from "@/lib/sweeps/contact-tuning";
import { csvText } from "@/lib/csv";
import { csvHeader, emptyVerdictCounts, exportedMetricKeys, formatNumber, sweepMeasuresRotation, type CellResult, type VerdictCounts } from "@/lib/sweeps/results";
import type { SweepSpec } from "@/lib/sweeps/spec";
import type { SweepAxisView, SweepView } from "@/lib/sweeps/sweep-view";
import { readBlob } from "./result-store";

export type { SweepAxisView, SweepView } from "@/lib/sweeps/sweep-view";

export function axisViews(spec: SweepSpec, axes: readonly ExpandedAxis[] = expandAxes(spec)): SweepAxisView[] {
  return axes.map((axis, i) => ({
    path: axis.parameter,
    label: axis.label,
    unit: axis.unit,
    spacing: spec.axes[i].values ? "list" : (spec.axes[i].spacing ?? "linear"),
    values: axis.values,
  }));
}

/** The sweep's verdict counts as stored with it (running totals kept as chunks land). */
export function verdictCountsFrom(stored: Record<string, number> | null | undefined): VerdictCounts {
  const counts = emptyVerdictCounts();
  for (const verdict of VERDICTS) counts[verdict] = Number(stored?.[verdict] ?? 0);
  return counts;
}

export async function sweepView(db: DbOrTx, sweep: Sweep): Promise<SweepView> {
  const spec = sweep.spec;
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
    ceilingMs: sweep.ceilingMs,
    metering: sweep.metering,
    verdictCounts: verdictCountsFrom(sweep.verdictCounts),
    axes: axisViews(spec),
    spec,
    rerunOf: sweep.rerunOfSweepId !== null && sweep.rerunOfCellIndex !== null ? { sweepId: sweep.rerunOfSweepId, cellIndex: sweep.rerunOfCellIndex } : null,
  };
}

const ROWS_PER_READ = 8;

/**
 * Which results rows to read by their change cursor (sweep_results.recorded_seq): those written
 * after `after` and no later than `upTo` (a cursor taken before the rows are read).
 */
export interface ChangeWindow {
  after: bigint;
  upTo: bigint;
}

/**
 * The sweep's change cursor: the largest recorded_seq of its results rows, 0 before any. Rows of
 * one sweep are written by the transaction that creates it (cached cells) or by
 * kickdrift_record_chunk holding its studio's and its own lock until commit, so every row with a
 * cursor up to this one is committed once it is read, and a row written later gets a larger one.
 */
export async function resultsCursor(db: DbOrTx, sweepId: string): Promise<bigint> {
  const [row] = await db
    .select({ cursor: sql<string>`coalesce(max(${sweepResults.recordedSeq}), 0)::text` })
    .from(sweepResults)
    .where(eq(sweepResults.sweepId, sweepId));
  return BigInt(row?.cursor ?? "0");
}

/**
 * The sweep's stored results, one decoded chunk at a time in chunk (= cell) order. Rows are read
 * a few at a time, so a large sweep is never held whole. `onlyIndex` reads just the chunk holding
 * that cell; `changed` only the rows whose cursor lies in that window.
 */
export async function* storedChunks(db: DbOrTx, sweep: Sweep, onlyIndex?: number, changed?: ChangeWindow): AsyncGenerator<PackedView> {
  if (onlyIndex !== undefined) {
    const [row] = await db
      .select({ result: sweepResults })
      .from(sweepResults)
      .innerJoin(sweepChunks, and(eq(sweepChunks.sweepId, sweepResults.sweepId), eq(sweepChunks.chunkIndex, sweepResults.chunkIndex)))
      .where(and(eq(sweepResults.sweepId, sweep.id), lte(sweepChunks.firstCell, onlyIndex), sql`${sweepChunks.firstCell} + ${sweepChunks.cellCount} > ${onlyIndex}`));
    if (row) yield new PackedView(await readBlob(row.result));
    return;
  }
  let after = -1;
  for (;;) {
    const rows: SweepResult[] = await db
      .select()
      .from(sweepResults)
      .where(
        and(
          eq(sweepResults.sweepId, sweep.id),
          gt(sweepResults.chunkIndex, after),
          changed ? gt(sweepResults.recordedSeq, changed.after) : undefined,
          changed ? lte(sweepResults.recordedSeq, changed.upTo) : undefined,
        ),
      )
      .orderBy(asc(sweepResults.chunkIndex))
      .limit(ROWS_PER_READ);
    for (const row of rows) yield new PackedView(await readBlob(row));
    if (rows.length < ROWS_PER_READ) return;
    after = rows[rows.length - 1].chunkIndex;
  }
}

/**
 * The metrics a sweep's views and exports carry, as positions in the packed run (the packed order
 * is METRIC_KEYS then the rotation metrics, so these are the first `keys.length`): the rotation
 * metrics only for sweeps that measure them, so other sweeps' bytes are as before they were stored.
 */
function exportedMetrics(spec: SweepSpec, axes: readonly ExpandedAxis[]): readonly string[] {
  return exportedMetricKeys(sweepMeasuresRotation(spec, axes));
}

/** Metrics of a stored cell as the API shows them: fixed key order, non-finite as null, −0 as 0. */
function apiMetrics(view: PackedView, n: number, keys: readonly string[]): Metrics {
  const out: Record<string, number | boolean | null> = {};
  for (let m = 0; m < keys.length; m++) {
    const value = view.metric(n, m);
    out[keys[m]] = typeof value === "number" ? (Number.isFinite(value) ? value + 0 : null) : value;
  }
  return out as unknown as Metrics;
}

/** The sweep's finished cells in index order, as CellResult records (`onlyIndex`: just that cell, if done). */
export async function storedCells(db: DbOrTx, sweep: Sweep, onlyIndex?: number): Promise<CellResult[]> {
  const spec = sweep.spec;
  const axes = expandAxes(spec);
  const keys = exportedMetrics(spec, axes);
  const cells: CellResult[] = [];
  for await (const view of storedChunks(db, sweep, onlyIndex)) {
    if (onlyIndex !== undefined) {
      const n = view.find(onlyIndex);
      if (n >= 0) cells.push({ index: onlyIndex, axisValues: axisValuesAt(axes, onlyIndex), metrics: apiMetrics(view, n, keys), verdict: view.verdict(n), reason: view.reason(n) });
      continue;
    }
    for (let n = 0; n < view.count; n++) {
      const index = view.indices[n];
      cells.push({ index, axisValues: axisValuesAt(axes, index), metrics: apiMetrics(view, n, keys), verdict: view.verdict(n), reason: view.reason(n) });
    }
  }
  return cells;
}

/**
 * One cell without its time series: its parameters, its full scenario and what is stored of its
 * result (null values before the cell is done). The cell route adds the recomputed series; the
 * cell page renders this part on the server, so the verdict is there before the engine runs again.
 */
export async function cellSummary(db: DbOrTx, sweep: Sweep, index: number): Promise<CellResultOrPending & { scenario: Scenario }> {
  const spec = sweep.spec;
  const cell = cellAt(spec, expandAxes(spec), index);
  const [stored] = await storedCells(db, sweep, index);
  return {
    index,
    axisValues: cell.axisValues,
    scenario: cell.scenario,
    metrics: stored?.metrics ?? null,
    verdict: stored?.verdict ?? null,
    reason: stored?.reason ?? null,
  };
}

type CellResultOrPending = Omit<CellResult, "metrics" | "verdict" | "reason"> & {
  metrics: CellResult["metrics"] | null;
  verdict: CellResult["verdict"] | null;
  reason: CellResult["reason"] | null;
};

/** Verdict code per cell index (255 where the cell is not done yet), for maps and envelopes. */
export async function storedVerdictCodes(db: DbOrTx, sweep: Sweep): Promise<Uint8Array> {
  const codes = new Uint8Array(sweep.cells).fill(255);
  for await (const view of storedChunks(db, sweep)) for (let n = 0; n < view.count; n++) codes[view.indices[n]] = view.verdicts[n];
  return codes;
}

// ---------------------------------------------------------------------------
// The cells route's bodies, written straight from the packed rows.

/** Text of each axis value, per axis, in the given format (computed once per request). */
function axisTexts(axes: readonly ExpandedAxis[], format: "json" | "csv"): string[][] {
  return axes.map((axis) =>
    axis.values.map((value) =>
      format === "json" ? JSON.stringify(value) : typeof value === "number" ? (Number.isFinite(value) ? formatNumber(value) : "") : csvText(value),
    ),
  );
}

const jsonMetricPrefixes = (keys: readonly string[]) => keys.map((key, m) => `${m === 0 ? "" : ","}${JSON.stringify(key)}:`);

function metricText(view: PackedView, n: number, m: number, nullText: string): string {
  const value = view.metric(n, m);
  if (value === null) return nullText;
  if (typeof value === "boolean") return value ? "true" : "false";
  return Number.isFinite(value) ? String(value) : nullText; // String(−0) is "0"
}

function cellPositions(axes: readonly ExpandedAxis[], index: number, out: number[]): void {
  let rest = index;
  for (let i = axes.length - 1; i >= 0; i--) {
    const length = axes[i].values.length;
    out[i] = rest % length;
    rest = Math.floor(rest / length);
  }
}

/** One stored chunk as JSON array items: the bytes JSON.stringify(cellJson(cell)) gives, comma-led after the first. */
function chunkJson(view: PackedView, axes: readonly ExpandedAxis[], texts: string[][], prefixes: readonly string[], first: boolean, contact?: SweepSpec): string {
  const positions = new Array<number>(axes.length);
  let out = "";
  for (let n = 0; n < view.count; n++) {
    const index = view.indices[n];
    cellPositions(axes, index, positions);
    let axisValues = "";
    for (let i = 0; i < axes.length; i++) axisValues += (i === 0 ? "" : ",") + texts[i][positions[i]];
    let metrics = "";
    for (let m = 0; m < prefixes.length; m++) metrics += prefixes[m] + metricText(view, n, m, "null");
    out += `${first && n === 0 ? "" : ","}{"index":${index},"axisValues":[${axisValues}],"metrics":{${metrics}},"verdict":${JSON.stringify(view.verdict(n))},"reason":${JSON.stringify(view.reason(n))}${contact ? `,${contactTuningJson(cellContactTuning(contact, axes, index))}` : ""}}`;
  }
  return out;
}

/** One stored chunk as CSV rows: the bytes cellToCsv(cell) + CRLF gives. */
function chunkCsv(view: PackedView, axes: readonly ExpandedAxis[], texts: string[][], metricCount: number, contact?: SweepSpec): string {
  const positions = new Array<number>(axes.length);
  let out = "";
  for (let n = 0; n < view.count; n++) {
    const index = view.indices[n];
    cellPositions(axes, index, positions);
    let row = String(index);
    for (let i = 0; i < axes.length; i++) row += `,${texts[i][positions[i]]}`;
    row += `,${csvText(view.verdict(n))},${csvText(view.reason(n))}`;
    for (let m = 0; m < metricCount; m++) row += `,${metricText(view, n, m, "")}`;
    if (contact) row += contactTuningCsv(cellContactTuning(contact, axes, index));
    out += `${row}\r\n`;
  }
  return out;
}

/**
 * The done cells as a stream of bytes, chunk by chunk: JSON `{"cells":[…]}` (the bytes
 * JSON.stringify({ cells: cells.map(cellJson) }) gives) or CSV (header row, then one CRLF row per cell).
 * With `changed`, only the cells of the rows in that window, and the JSON ends with the window's
 * end as a string field: `{"cells":[…],"cursor":"123"}` (the bytes JSON.stringify gives for
 * `{ cells, cursor: String(changed.upTo) }`).
 */
export function cellsStream(db: DbOrTx, sweep: Sweep, format: "json" | "csv", changed?: ChangeWindow, options: { contact?: boolean } = {}): ReadableStream<Uint8Array> {
  const axes = expandAxes(sweep.spec);
  const rotation = sweepMeasuresRotation(sweep.spec, axes);
  const metricKeys = exportedMetricKeys(rotation);
  const prefixes = jsonMetricPrefixes(metricKeys);
  // With `contact`, each cell also carries its contact as frequency and damping ratio (lib/sweeps/contact-tuning.ts).
  const contact = options.contact ? (sweep.spec) : undefined;
  const texts = axisTexts(axes, format);
  const encoder = new TextEncoder();
  const chunks = storedChunks(db, sweep, undefined, changed);
  const jsonEnd = changed ? `],"cursor":${JSON.stringify(String(changed.upTo))}}` : "]}";
  let started = false;
  let first = true;
  return new ReadableStream<Uint8Array>({
    async pull(controller) {
      try {
        if (!started) {
          started = true;
          controller.enqueue(encoder.encode(format === "json" ? `{"cells":[` : `${csvHeader(axes, rotation)}${contact ? `,${CONTACT_CSV_COLUMNS.join(",")}` : ""}\r\n`));
          return;
        }
        const next = await chunks.next();
        if (next.done) {
          if (format === "json") controller.enqueue(encoder.encode(jsonEnd));
          controller.close();
          return;
        }
        const view = next.value;
        if (view.count === 0) return;
        controller.enqueue(encoder.encode(format === "json" ? chunkJson(view, axes, texts, prefixes, first, contact) : chunkCsv(view, axes, texts, metricKeys.length, contact)));
        first = false;
      } catch (error) {
        controller.error(error);
      }
    },
    async cancel() {
      await chunks.return(undefined);
    },
  });
}

export function cellJson(cell: CellResult): { index: number; axisValues: (number | string)[]; metrics: Metrics; verdict: Verdict; reason: string } {
  return { index: cell.index, axisValues: cell.axisValues, metrics: cell.metrics, verdict: cell.verdict, reason: cell.reason };
}
