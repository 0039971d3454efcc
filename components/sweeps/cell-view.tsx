"use client";
/** Drill-down of one cell: parameters and metrics with units, verdict and reason, time series, replay, and a re-run at a finer dt. */
import Link from "next/link";
import { useMutation, useQuery } from "@tanstack/react-query";
import { useRouter } from "next/navigation";
import { useMemo, useState } from "react";
import { CellTimeSeries } from "@/components/maps/CellTimeSeries";
import { TrajectoryReplay } from "@/components/maps/TrajectoryReplay";
import { Alert, Button, Card, LoadingRows } from "@/components/ui";
import { StudioShell } from "@/components/studio/studio-shell";
import { VERDICT_STYLES } from "@/lib/charts/categories";
import { formatFrameStepWithRate, formatParameterValue, formatPrecise } from "@/lib/ui/units";
import { buildScene } from "@/lib/physics/scenes";
import type { Metrics } from "@/lib/physics/types";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import type { StudioRole } from "@/lib/ui/types";
import { formatCompute } from "@/lib/billing/format";
import { reasonForDisplay } from "@/lib/ui/reasons";
import { formatPriceCents } from "@/lib/billing/packs";
import { sweepKeys, sweepPath, useSweep, type CellDetail, type Quote, type Sweep } from "./sweep-api";

const METRIC_ROWS: readonly { key: keyof Metrics; label: string; unit: string }[] = [
  { key: "energyErrorRel", label: "Final energy error (relative)", unit: "" },
  { key: "maxEnergyErrorRel", label: "Largest energy error (relative)", unit: "" },
  { key: "maxOverlapFraction", label: "Deepest overlap / smaller radius", unit: "" },
  { key: "effectiveRestitution", label: "Measured restitution", unit: "" },
  { key: "contactDurationS", label: "First contact duration", unit: "s" },
  { key: "contactSteps", label: "Steps in contact", unit: "steps" },
  { key: "momentumDriftRelX", label: "Momentum drift x (relative)", unit: "" },
  { key: "momentumDriftRelY", label: "Momentum drift y (relative)", unit: "" },
  { key: "tunneled", label: "Tunnelled", unit: "" },
  { key: "exploded", label: "Exploded", unit: "" },
  { key: "steps", label: "Integrator steps", unit: "steps" },
  { key: "maxOmegaH", label: "Largest ω·h in contact", unit: "" },
  { key: "amplification", label: "Rebound / model's restitution", unit: "" },
];

/** Rows of the rotation metrics, shown where the cell carries them (sweeps with friction, rolling resistance or a resting scene). */
const ROTATION_METRIC_ROWS: readonly { key: keyof Metrics; label: string; unit: string }[] = [
  { key: "endSlipMPerS", label: "Slip at the end of the first contact", unit: "m/s" },
  { key: "reboundSpinRadPerS", label: "Rebound spin", unit: "rad/s" },
  { key: "reboundAngleDeg", label: "Rebound angle from the normal", unit: "°" },
  { key: "angularMomentumDriftRel", label: "Angular momentum drift (relative)", unit: "" },
  { key: "maxTangentialOmegaH", label: "Largest tangential ω·h", unit: "" },
  { key: "slidingSteps", label: "Steps with a sliding contact", unit: "steps" },
  { key: "settleTimeS", label: "Settle time", unit: "s" },
  { key: "residualKineticJ", label: "Residual kinetic energy (last quarter)", unit: "J" },
  { key: "residualMaxSpeedMPerS", label: "Residual top speed (last quarter)", unit: "m/s" },
  { key: "creepM", label: "Creep (second half)", unit: "m" },
  { key: "restingOverlapFraction", label: "Resting overlap / radius", unit: "" },
  { key: "restingOverlapRatio", label: "Resting overlap / static m·g/k", unit: "" },
];

/** The metric rows of a cell: the rotation rows only when its metrics carry them. */
function metricRowsFor(metrics: Metrics): readonly { key: keyof Metrics; label: string; unit: string }[] {
  return ROTATION_METRIC_ROWS.some((row) => row.key in metrics) ? [...METRIC_ROWS, ...ROTATION_METRIC_ROWS] : METRIC_ROWS;
}

function metricText(value: unknown, unit: string): string {
  if (typeof value === "boolean") return value ? "yes" : "no";
  if (typeof value === "number" && Number.isFinite(value)) return formatPrecise(value, unit);
  return "no value";
}

export function CellView({
  studioId,
  studioName,
  role,
  sweepId,
  index,
  initialSweep,
  initialCell,
}: {
  studioId: string;
  studioName: string;
  role: StudioRole;
  sweepId: string;
  index: number;
  /** The server page's copies: the sweep and the cell's stored result paint at once; only the series waits for the engine. */
  initialSweep?: Sweep;
  initialCell?: CellDetail["cell"];
}) {
  const router = useRouter();
  const sweep = useSweep(studioId, sweepId, initialSweep);
  const detail = useQuery({
    queryKey: sweepKeys.cell(studioId, sweepId, index),
    queryFn: () => apiFetch<CellDetail>(`${sweepPath(studioId, sweepId)}/cells/${index}`),
    retry: false,
  });
  const cell = detail.data?.cell ?? initialCell;
  const [dtFactor, setDtFactor] = useState(0.25);
  const dtFactorValid = Number.isFinite(dtFactor) && dtFactor > 0 && dtFactor < 1;
  // A re-run is a sweep like any other: first its quote, then a confirmation that accepts that ceiling.
  const quote = useMutation({
    mutationFn: async (factor: number) => ({ factor, quote: (await apiFetch<{ quote: Quote }>(`${sweepPath(studioId, sweepId)}/cells/${index}/rerun/quote`, { method: "POST", body: { dtFactor: factor } })).quote }),
  });
  const quoted = quote.data && quote.data.factor === dtFactor ? quote.data.quote : null;
  const rerun = useMutation({
    mutationFn: async (accepted: Quote) =>
      (await apiFetch<{ sweep: Sweep }>(`${sweepPath(studioId, sweepId)}/cells/${index}/rerun`, { method: "POST", body: { dtFactor, acceptedQuoteMs: accepted.ceilingMs } })).sweep,
    onSuccess: (created) => router.push(`/studios/${studioId}/sweeps/${created.id}`),
  });
  const canRun = role === "owner" || role === "engineer";

  const scenario = cell?.scenario;
  const scene = useMemo(() => {
    if (!scenario) return null;
    const setup = buildScene(scenario.scene, scenario.seed);
    return { radii: Array.from(setup.bodies.radius), walls: setup.walls.map((wall) => ({ normalX: wall.normalX, normalY: wall.normalY, offsetM: wall.offsetM })) };
  }, [scenario]);

  const energy = useMemo(() => {
    const totals = detail.data?.series.totalJ ?? [];
    if (totals.length === 0) return null;
    const initial = totals[0];
    let largest = -Infinity;
    for (const value of totals) if (Number.isFinite(value) && value > largest) largest = value;
    return { initial, largest, ratio: initial > 0 ? largest / initial : Number.NaN };
  }, [detail.data]);

  return (
    <StudioShell studioId={studioId} studioName={studioName} role={role}>
      <p className="mb-4 text-sm">
        <Link href={`/studios/${studioId}/sweeps/${sweepId}`} className="text-action hover:underline">
          ← Back to the stability map{sweep.data?.name ? ` of “${sweep.data.name}”` : ""}
        </Link>
      </p>
      {!cell ? (
        detail.isError ? <Alert>{errorMessage(detail.error)}</Alert> : <LoadingRows label="the cell" />
      ) : (
        <div className="space-y-6">
          <div className="grid gap-6 lg:grid-cols-2">
            <Card title={`Cell ${index}`}>
              <p className="mb-3 flex items-center gap-2 text-sm">
                <span className="inline-block h-3 w-3 rounded-sm" style={{ background: VERDICT_STYLES[cell.verdict].colour }} aria-hidden="true" />
                <span className="font-semibold" data-testid="cell-verdict">
                  {VERDICT_STYLES[cell.verdict].label}
                </span>
              </p>
              {cell.reason ? <p className="mb-3 text-sm text-ink-muted" data-testid="cell-reason">{reasonForDisplay(cell.reason)}</p> : null}
              <h3 className="mb-1 text-sm font-semibold">Swept parameters</h3>
              <dl className="mb-3 grid grid-cols-[1fr_auto] gap-x-4 gap-y-1 text-sm">
                {cell.axisValues.map((value, i) => {
                  const axis = sweep.data?.axes[i];
                  return (
                    <div key={i} className="contents">
                      <dt className="text-ink-muted">{axis ? (axis.path === "dtS" ? axis.label : `${axis.label} [${axis.unit || "no unit"}]`) : `axis ${i + 1}`}</dt>
                      <dd className="text-right font-mono">{formatParameterValue(axis?.path ?? "", value, axis?.unit ?? "", { precise: true })}</dd>
                    </div>
                  );
                })}
                {(
                  [
                    ["dtS", "frame step dt", formatFrameStepWithRate(cell.scenario.dtS, 4)],
                    ["substeps", "substeps per frame [no unit]", String(cell.scenario.substeps)],
                    ["integrator", "integrator", cell.scenario.integrator],
                  ] as const
                )
                  // The rest of the step set-up, where no axis already names it.
                  .filter(([path]) => !sweep.data?.axes.some((axis) => axis.path === path))
                  .map(([path, label, text]) => (
                    <div key={path} className="contents">
                      <dt className="text-ink-muted">{label}</dt>
                      <dd className="text-right font-mono">{text}</dd>
                    </div>
                  ))}
              </dl>
              <h3 className="mb-1 text-sm font-semibold">Metrics</h3>
              <dl className="grid grid-cols-[1fr_auto] gap-x-4 gap-y-1 text-sm" data-testid="cell-metrics">
                {metricRowsFor(cell.metrics).map((row) => (
                  <div key={row.key} className="contents">
                    <dt className="text-ink-muted">
                      {row.label} [{row.unit || "no unit"}]
                    </dt>
                    <dd className="text-right font-mono">{metricText(cell.metrics[row.key], row.unit)}</dd>
                  </div>
                ))}
              </dl>
            </Card>
            <Card title="Energy and re-run">
              {energy ? (
                <dl className="mb-4 grid grid-cols-[1fr_auto] gap-x-4 gap-y-1 text-sm">
                  <dt className="text-ink-muted">Initial total energy [J]</dt>
                  <dd className="text-right font-mono" data-testid="energy-initial">
                    {formatPrecise(energy.initial, "J")}
                  </dd>
                  <dt className="text-ink-muted">Largest total energy [J]</dt>
                  <dd className="text-right font-mono" data-testid="energy-largest">
                    {formatPrecise(energy.largest, "J")}
                  </dd>
                  <dt className="text-ink-muted">Largest / initial [× initial]</dt>
                  <dd className="text-right font-mono" data-testid="energy-ratio">
                    {Number.isFinite(energy.ratio) ? energy.ratio.toPrecision(4) : "no value"}
                  </dd>
                </dl>
              ) : null}
              {canRun ? (
                <div className="space-y-2">
                  <label htmlFor="rerun-dt-factor" className="block text-sm font-medium">
                    Finer dt factor <span className="font-mono text-xs text-ink-muted">[× this cell&apos;s dt, between 0 and 1]</span>
                  </label>
                  <input
                    id="rerun-dt-factor"
                    type="number"
                    step="any"
                    min={0}
                    max={1}
                    className="block w-40 rounded-md border border-line bg-surface px-3 py-2 text-sm"
                    value={Number.isFinite(dtFactor) ? dtFactor : ""}
                    aria-invalid={dtFactorValid ? undefined : true}
                    onChange={(event) => setDtFactor(event.target.value === "" ? Number.NaN : Number(event.target.value))}
                  />
                  {dtFactorValid ? null : <p className="text-sm font-medium text-danger">The factor must be greater than 0 and less than 1.</p>}
                  <Button variant={quoted ? "secondary" : "primary"} onClick={() => quote.mutate(dtFactor)} disabled={!dtFactorValid || quote.isPending}>
                    {quote.isPending ? "Getting the quote…" : "Re-run at a finer dt"}
                  </Button>
                  <p className="text-xs text-ink-muted">A new one-cell sweep, quoted and billed as any sweep: you see its quote and confirm before it starts.</p>
                  {quote.isError ? <Alert>{errorMessage(quote.error)}</Alert> : null}
                  {quoted ? (
                    <section className="rounded-lg border-2 border-action bg-surface p-4" role="dialog" aria-labelledby="rerun-confirm-heading" data-testid="confirm-rerun">
                      <h3 id="rerun-confirm-heading" className="font-semibold">
                        Re-run this cell at dt × {dtFactor}?
                      </h3>
                      <p className="mt-1 text-sm text-ink-muted" data-testid="rerun-quote">
                        {quoted.limits.violations.length > 0
                          ? quoted.limits.violations[0].message
                          : `${quoted.cellsToRun.toLocaleString("en")} cell to run (${quoted.steps.toLocaleString("en")} integrator steps): expected ${formatCompute(quoted.expectedMs)} (${formatPriceCents(quoted.money.expectedCents)}), at most ${formatCompute(quoted.ceilingMs)} (${formatPriceCents(quoted.money.ceilingCents)}). The ceiling is reserved now; the run is billed the work it does, never more.`}
                      </p>
                      <div className="mt-3 flex gap-2">
                        <Button onClick={() => rerun.mutate(quoted)} disabled={rerun.isPending || quoted.limits.violations.length > 0}>
                          {rerun.isPending ? "Starting…" : "Start the re-run"}
                        </Button>
                        <Button variant="ghost" onClick={() => quote.reset()}>
                          Not now
                        </Button>
                      </div>
                    </section>
                  ) : null}
                  {rerun.isError ? <Alert>{errorMessage(rerun.error)}</Alert> : null}
                </div>
              ) : null}
            </Card>
          </div>
          {/* The series is the engine's run of the cell again, fetched after the page: the cards above do not wait for it. */}
          {detail.data ? (
            <>
              <Card title="Time series">
                <CellTimeSeries series={detail.data.series} overlapLimitM={scene ? cell.scenario.tolerances.maxOverlapFraction * Math.min(...scene.radii) : undefined} />
              </Card>
              {scene ? (
                <Card title="Replay">
                  <TrajectoryReplay series={detail.data.series} radiiM={scene.radii} walls={scene.walls} />
                </Card>
              ) : null}
            </>
          ) : (
            <Card title="Time series">{detail.isError ? <Alert>{errorMessage(detail.error)}</Alert> : <LoadingRows label="the time series" />}</Card>
          )}
        </div>
      )}
    </StudioShell>
  );
}
