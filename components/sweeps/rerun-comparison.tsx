"use client";
/**
 * The page of a one-cell sweep: the run's verdict with a way into its time series and replay, and
 * for a "re-run at a finer dt" the before/after comparison with the cell it re-runs.
 */
import Link from "next/link";
import { useQuery } from "@tanstack/react-query";
import { VerdictSymbol } from "@/components/maps";
import { Alert, Card, LoadingRows } from "@/components/ui";
import { DataTable, type Column } from "@/components/data-table";
import { VERDICT_STYLES } from "@/lib/charts/categories";
import type { Metrics, Verdict } from "@/lib/physics/types";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { reasonForDisplay } from "@/lib/ui/reasons";
import { formatFrameStepWithRate, formatPrecise } from "@/lib/ui/units";
import { sweepKeys, sweepPath, type CellDetail, type CellRow, type Sweep } from "./sweep-api";

export interface ComparedRun {
  dtS: number;
  substeps: number;
  verdict: Verdict;
  metrics: Metrics;
}

export interface ComparisonRow {
  key: string;
  label: string;
  before: string;
  after: string;
  /** "better", "worse", "same" or "" (no direction: e.g. the frame step itself). */
  change: "better" | "worse" | "same" | "";
}

const SEVERITY: readonly Verdict[] = ["stable", "coarse-contact", "energy-drift", "restitution-off", "deep-overlap", "tunneled", "step-unstable", "exploded"];

function num(value: number | null | undefined, unit: string): string {
  return typeof value === "number" && Number.isFinite(value) ? formatPrecise(value, unit) : "no value";
}

/** Smaller |value| is better; null on either side has no direction. */
function byMagnitude(before: number | null, after: number | null): ComparisonRow["change"] {
  if (before === null || after === null || !Number.isFinite(before) || !Number.isFinite(after)) return "";
  const a = Math.abs(before);
  const b = Math.abs(after);
  if (Math.abs(a - b) <= 1e-12 * Math.max(a, b, 1e-300)) return "same";
  return b < a ? "better" : "worse";
}

/** Rows of the before/after table: the step, the verdict and the metrics that decide it. */
export function comparisonRows(before: ComparedRun, after: ComparedRun): ComparisonRow[] {
  const severity = (v: Verdict) => SEVERITY.indexOf(v);
  const verdictChange = severity(after.verdict) === severity(before.verdict) ? "same" : severity(after.verdict) < severity(before.verdict) ? "better" : "worse";
  const restitutionGap = (m: Metrics) => (m.amplification === null ? null : m.amplification - 1);
  return [
    { key: "dt", label: "Frame step dt", before: formatFrameStepWithRate(before.dtS, 4), after: formatFrameStepWithRate(after.dtS, 4), change: "" },
    { key: "substeps", label: "Substeps per frame", before: String(before.substeps), after: String(after.substeps), change: "" },
    { key: "verdict", label: "Verdict", before: VERDICT_STYLES[before.verdict].label, after: VERDICT_STYLES[after.verdict].label, change: verdictChange },
    { key: "maxEnergy", label: "Largest energy error (relative)", before: num(before.metrics.maxEnergyErrorRel, ""), after: num(after.metrics.maxEnergyErrorRel, ""), change: byMagnitude(before.metrics.maxEnergyErrorRel, after.metrics.maxEnergyErrorRel) },
    { key: "finalEnergy", label: "Final energy error (relative)", before: num(before.metrics.energyErrorRel, ""), after: num(after.metrics.energyErrorRel, ""), change: byMagnitude(before.metrics.energyErrorRel, after.metrics.energyErrorRel) },
    { key: "overlap", label: "Deepest overlap / smaller radius", before: num(before.metrics.maxOverlapFraction, ""), after: num(after.metrics.maxOverlapFraction, ""), change: byMagnitude(before.metrics.maxOverlapFraction, after.metrics.maxOverlapFraction) },
    { key: "omegaH", label: "Largest ω·h in contact", before: num(before.metrics.maxOmegaH, ""), after: num(after.metrics.maxOmegaH, ""), change: byMagnitude(before.metrics.maxOmegaH, after.metrics.maxOmegaH) },
    { key: "rebound", label: "Rebound / model's restitution", before: num(before.metrics.amplification, ""), after: num(after.metrics.amplification, ""), change: byMagnitude(restitutionGap(before.metrics), restitutionGap(after.metrics)) },
    { key: "contactSteps", label: "Steps in contact", before: String(before.metrics.contactSteps), after: String(after.metrics.contactSteps), change: "" },
  ];
}

const CHANGE_TEXT: Record<ComparisonRow["change"], string> = { better: "better", worse: "worse", same: "same", "": "" };

const COMPARISON_COLUMNS: Column<ComparisonRow>[] = [
  { key: "quantity", header: "Quantity", rowHeader: true, className: "text-ink-muted", cell: (row) => row.label },
  { key: "before", header: "Original cell", className: "font-mono", cell: (row) => row.before },
  { key: "after", header: "Re-run", className: "font-mono", cell: (row) => row.after },
  {
    key: "change",
    header: "Change",
    className: (row) => (row.change === "better" ? "font-semibold text-ok" : row.change === "worse" ? "font-semibold text-danger" : "text-ink-muted"),
    cell: (row) => CHANGE_TEXT[row.change],
  },
];

export function SingleRunPanel({ studioId, sweep, cells }: { studioId: string; sweep: Sweep; cells: readonly CellRow[] }) {
  const run = cells.find((cell) => cell.index === 0) ?? null;
  return (
    <div className="space-y-6">
      <Card title={sweep.rerunOf ? "The re-run" : "The run"}>
        {run ? (
          <div className="space-y-2 text-sm">
            <p className="flex items-center gap-2">
              <VerdictSymbol verdict={run.verdict} size={16} />
              <span className="font-semibold" data-testid="single-run-verdict">
                {VERDICT_STYLES[run.verdict].label}
              </span>
            </p>
            {run.reason ? <p className="text-ink-muted">{reasonForDisplay(run.reason)}</p> : null}
            <p>
              <Link className="font-medium text-action hover:underline" href={`/studios/${studioId}/sweeps/${sweep.id}/cells/0`}>
                Open its time series and replay
              </Link>
            </p>
          </div>
        ) : (
          <p className="text-sm text-ink-muted">The run has not finished yet; its verdict appears here when it does.</p>
        )}
      </Card>
      {sweep.rerunOf ? <RerunComparison studioId={studioId} sweep={sweep} run={run} /> : null}
    </div>
  );
}

function RerunComparison({ studioId, sweep, run }: { studioId: string; sweep: Sweep; run: CellRow | null }) {
  const parent = sweep.rerunOf!;
  const parentCell = useQuery({
    queryKey: sweepKeys.cell(studioId, parent.sweepId, parent.cellIndex),
    queryFn: () => apiFetch<CellDetail>(`${sweepPath(studioId, parent.sweepId)}/cells/${parent.cellIndex}`),
    retry: false,
  });
  const parentHref = `/studios/${studioId}/sweeps/${parent.sweepId}/cells/${parent.cellIndex}`;
  return (
    <Card title="Before and after">
      <p className="mb-3 text-sm text-ink-muted">
        This run is cell {parent.cellIndex} of{" "}
        <Link className="text-action hover:underline" href={parentHref}>
          its sweep
        </Link>{" "}
        again with a finer frame step; everything else is the same.
      </p>
      {parentCell.isPending ? (
        <LoadingRows label="the original cell" />
      ) : parentCell.isError ? (
        <Alert>{errorMessage(parentCell.error)}</Alert>
      ) : !run ? (
        <p className="text-sm text-ink-muted">The comparison appears when the re-run has finished.</p>
      ) : (
        <DataTable
          testId="rerun-comparison"
          rows={comparisonRows(
            { dtS: parentCell.data.cell.scenario.dtS, substeps: parentCell.data.cell.scenario.substeps, verdict: parentCell.data.cell.verdict, metrics: parentCell.data.cell.metrics },
            { dtS: sweep.spec.scenario.dtS, substeps: sweep.spec.scenario.substeps, verdict: run.verdict, metrics: run.metrics },
          )}
          rowKey={(row) => row.key}
          rowProps={(row) => ({ data: { "data-row": row.key } })}
          columns={COMPARISON_COLUMNS}
        />
      )}
    </Card>
  );
}
