"use client";
/**
 * The stability-map page of one sweep: live progress, the map filling in as chunks land, what to
 * show and over which axes, the safe envelope with its exports, and the result exports.
 */
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useRouter } from "next/navigation";
import { useCallback, useEffect, useMemo, useRef, useState, type ReactNode } from "react";
import { CompareMaps, MapGrid, StabilityMap, VerdictSymbol, type MapLayer, type OverlayInput } from "@/components/maps";
import { ConfirmDialog } from "@/components/confirm-dialog";
import { Alert, Button, ButtonLink, Card, LoadingRows, SelectField, TextField } from "@/components/ui";
import { DataTable } from "@/components/data-table";
import { StudioShell } from "@/components/studio/studio-shell";
import { VERDICTS_BY_SEVERITY, VERDICT_STYLES } from "@/lib/charts/categories";
import { formatParameterValue, parameterUnitLabel } from "@/lib/ui/units";
import { HelpPanel } from "@/components/help/verdict-help";
import type { Metrics } from "@/lib/physics/types";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDateTime } from "@/lib/ui/format";
import type { StudioRole } from "@/lib/ui/types";
import { formatCompute } from "@/lib/billing/format";
import { isActive, sweepKeys, sweepPath, useSweep, useSweepCells, type CellRow, type Envelope, type Sweep } from "./sweep-api";
import { COLOUR_RANGES, SINGLE_ROW_AXIS, identicalIntegratorsNote, isNumericAxis, layerData, mapAxisFor, mapCellIndices, mapTitleBlock, metricLayersFor, metricScale, overlaysFor, specWithValue } from "./sweep-map-data";
import { StatusBadge, progressPercent } from "./sweeps-list";
import { SingleRunPanel } from "./rerun-comparison";

type ViewMode = "single" | "compare" | "grid";

function formatDuration(ms: number): string {
  if (!Number.isFinite(ms) || ms < 0) return "—";
  const seconds = Math.round(ms / 1000);
  if (seconds < 60) return `${seconds} s`;
  const minutes = Math.floor(seconds / 60);
  return `${minutes} min ${String(seconds % 60).padStart(2, "0")} s`;
}

function useNow(active: boolean): number {
  const [now, setNow] = useState(() => Date.now());
  useEffect(() => {
    if (!active) return;
    const timer = setInterval(() => setNow(Date.now()), 1000);
    return () => clearInterval(timer);
  }, [active]);
  return now;
}

/** Cancelling cannot be undone: say what stays, what stops and what is billed before it happens. */
function CancelSweepDialog({ open, sweep, busy, error, onConfirm, onCancel }: { open: boolean; sweep: Sweep; busy: boolean; error: string | null; onConfirm: () => void; onCancel: () => void }) {
  return (
    <ConfirmDialog open={open} title={`Cancel ${sweep.name ? `“${sweep.name}”` : "this sweep"}?`} confirmLabel="Cancel sweep" danger busy={busy} error={error} onConfirm={onConfirm} onCancel={onCancel} testId="confirm-cancel-sweep">
      <p>
        {sweep.cellsDone.toLocaleString("en")} of {sweep.cells.toLocaleString("en")} cells are done; they stay, with their results, and stay billed. Cells not yet run are dropped and not billed; a chunk running now stops unbilled.
      </p>
      <p className="text-ink-muted">A cancelled sweep cannot be resumed; run it again to finish it (finished cells come from the cache).</p>
    </ConfirmDialog>
  );
}

function ProgressPanel({ studioId, sweep, canRun, onCancel, cancelling }: { studioId: string; sweep: Sweep; canRun: boolean; onCancel: () => void; cancelling: boolean }) {
  const active = isActive(sweep.status);
  const now = useNow(active);
  const percent = progressPercent(sweep);
  const startedMs = sweep.startedAt ? Date.parse(sweep.startedAt) : null;
  const endMs = sweep.finishedAt ? Date.parse(sweep.finishedAt) : now;
  const elapsedMs = startedMs !== null ? Math.max(0, endMs - startedMs) : 0;
  // The rate so far predicts the rest; cached cells came for free, so they do not count towards the rate.
  const ranCells = Math.max(0, sweep.cellsDone - sweep.cachedCells);
  const leftMs = active && ranCells > 0 ? (elapsedMs / ranCells) * (sweep.cells - sweep.cellsDone) : Number.NaN;
  return (
    <Card
      title={
        <span className="flex flex-wrap items-center gap-3">
          <span data-testid="sweep-name">{sweep.name || `Sweep ${sweep.id.slice(0, 8)}`}</span> <StatusBadge status={sweep.status} />
        </span>
      }
      actions={
        canRun ? (
          <span className="flex flex-wrap gap-2">
            {/* The spec as it ran, in the builder, under a new name: nothing is resubmitted until it is quoted and confirmed. */}
            <ButtonLink variant="secondary" href={`/studios/${studioId}/sweeps/new?from=${encodeURIComponent(sweep.id)}`}>
              Duplicate and edit
            </ButtonLink>
            {active ? (
              <Button variant="danger" onClick={onCancel} disabled={cancelling}>
                {cancelling ? "Cancelling…" : "Cancel sweep"}
              </Button>
            ) : null}
          </span>
        ) : null
      }
    >
      {sweep.reason ? <p className="mb-3 text-sm text-ink-muted" data-testid="sweep-reason">{sweep.reason}</p> : null}
      <div
        className="h-3 w-full overflow-hidden rounded bg-surface-muted"
        role="progressbar"
        aria-label="Cells done"
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={percent}
        aria-valuetext={`${percent}% (${sweep.cellsDone} of ${sweep.cells} cells)`}
        data-testid="sweep-progress"
      >
        <div className="h-full bg-action transition-[width]" style={{ width: `${percent}%` }} />
      </div>
      <dl className="mt-3 grid grid-cols-2 gap-x-6 gap-y-1 text-sm md:grid-cols-4">
        <Fact label="Cells done" testId="sweep-cells-done">
          {sweep.cellsDone.toLocaleString("en")} / {sweep.cells.toLocaleString("en")} ({percent}%)
        </Fact>
        <Fact label="Elapsed">{startedMs !== null ? formatDuration(elapsedMs) : "not started"}</Fact>
        <Fact label="Estimated time left">{active ? formatDuration(leftMs) : "—"}</Fact>
        <Fact label={active ? "Billed so far" : "Billed"} testId="sweep-billed">
          {computeFigure(sweep.computeMs)}
        </Fact>
        {sweep.metering !== "wall-clock" ? (
          <>
            <Fact label="Quoted ceiling" testId="sweep-ceiling">
              {computeFigure(sweep.ceilingMs)}
            </Fact>
            <Fact label="Quoted expected" testId="sweep-expected">
              {computeFigure(sweep.estimatedComputeMs)}
            </Fact>
          </>
        ) : (
          <Fact label="Metering">worker wall time (submitted before work units; estimate {formatCompute(sweep.estimatedComputeMs)})</Fact>
        )}
        <Fact label="Created">{formatDateTime(sweep.createdAt)}</Fact>
        <Fact label="Chunks done">
          {sweep.chunksDone} / {sweep.chunks}
        </Fact>
        <Fact label="Cached cells">{sweep.cachedCells.toLocaleString("en")}</Fact>
      </dl>
      <ul className="mt-4 flex flex-wrap gap-2 text-sm" aria-label="Verdict counts" data-testid="verdict-counts">
        {VERDICTS_BY_SEVERITY.map((verdict) => (
          <li key={verdict} className="rounded-md border border-line px-2 py-1" data-testid={`verdict-count-${verdict}`}>
            <VerdictSymbol verdict={verdict} size={14} className="mr-1 inline-block align-middle" />
            {VERDICT_STYLES[verdict].label}: <span className="font-mono">{(sweep.verdictCounts[verdict] ?? 0).toLocaleString("en")}</span>
          </li>
        ))}
      </ul>
    </Card>
  );
}

/** One figure of the progress card: its name, then its value in the mono face. */
function Fact({ label, testId, children }: { label: string; testId?: string; children: ReactNode }) {
  return (
    <div>
      <dt className="text-ink-muted">{label}</dt>
      <dd className="font-mono" data-testid={testId}>
        {children}
      </dd>
    </div>
  );
}

/** Compute as people read it (formatCompute), then in exact milliseconds. */
function computeFigure(ms: number): string {
  return `${formatCompute(ms)} · ${ms.toLocaleString("en")} ms`;
}

const selectClasses = "block w-full rounded-md border border-line bg-surface px-2 py-1.5 text-sm";

/** One of the sweep's numeric axes, picked for a side of the map or the envelope (label and unit shown). */
function AxisSelect({ id, label, axes, choices, value, onChange }: {
  id: string;
  label: string;
  axes: Sweep["axes"];
  choices: readonly number[];
  value: number;
  onChange: (axisIndex: number) => void;
}) {
  return (
    <SelectField id={id} label={label} className={selectClasses} value={value} onChange={(event) => onChange(Number(event.target.value))}>
      {choices.map((i) => (
        <option key={i} value={i}>
          {axes[i].label} [{parameterUnitLabel(axes[i].path, axes[i].unit)}]
        </option>
      ))}
    </SelectField>
  );
}

export function SweepView({ studioId, studioName, role, sweepId, initialSweep }: { studioId: string; studioName: string; role: StudioRole; sweepId: string; initialSweep?: Sweep }) {
  const router = useRouter();
  const queryClient = useQueryClient();
  const sweepQuery = useSweep(studioId, sweepId, initialSweep);
  const sweep = sweepQuery.data;
  const active = isActive(sweep?.status);
  const cellsQuery = useSweepCells(studioId, sweepId, active);
  const canRun = role === "owner" || role === "engineer";

  // One last read of the cells once the sweep has finished (only what changed since the last poll), so the map shows every cell.
  const wasActive = useRef(false);
  useEffect(() => {
    if (active) wasActive.current = true;
    else if (wasActive.current && sweep) {
      wasActive.current = false;
      void queryClient.invalidateQueries({ queryKey: sweepKeys.cells(studioId, sweepId) });
    }
  }, [active, sweep, queryClient, studioId, sweepId]);

  const [confirmCancel, setConfirmCancel] = useState(false);
  const cancel = useMutation({
    mutationFn: () => apiFetch<{ sweep: Sweep }>(`${sweepPath(studioId, sweepId)}/cancel`, { method: "POST" }),
    onSuccess: (data) => {
      setConfirmCancel(false);
      queryClient.setQueryData(sweepKeys.sweep(studioId, sweepId), data.sweep);
    },
  });

  return (
    <StudioShell studioId={studioId} studioName={studioName} role={role}>
      {sweepQuery.isPending ? (
        <LoadingRows label="the sweep" />
      ) : sweepQuery.isError ? (
        <Alert>{errorMessage(sweepQuery.error)}</Alert>
      ) : (
        <div className="space-y-6">
          <ProgressPanel studioId={studioId} sweep={sweep!} canRun={canRun} onCancel={() => setConfirmCancel(true)} cancelling={cancel.isPending} />
          <CancelSweepDialog
            open={confirmCancel}
            sweep={sweep!}
            busy={cancel.isPending}
            error={cancel.isError ? errorMessage(cancel.error) : null}
            onConfirm={() => cancel.mutate()}
            onCancel={() => {
              cancel.reset();
              setConfirmCancel(false);
            }}
          />
          {sweep!.axes.length === 0 ? (
            // A one-cell sweep (a re-run at a finer dt, or a spec without axes) has no map: its run, and the comparison with its parent cell.
            <SingleRunPanel studioId={studioId} sweep={sweep!} cells={cellsQuery.data ?? []} />
          ) : (
            <SweepMaps
              sweep={sweep!}
              cells={cellsQuery.data ?? []}
              onOpenCell={(index) => router.push(`/studios/${studioId}/sweeps/${sweepId}/cells/${index}`)}
            />
          )}
          {cellsQuery.isError ? <Alert>{errorMessage(cellsQuery.error)}</Alert> : null}
          <EnvelopePanel studioId={studioId} sweep={sweep!} cells={cellsQuery.data ?? []} />
          <Card title="Exports">
            <div className="flex flex-wrap gap-3 text-sm">
              <a className="rounded-md border border-line px-3 py-1.5 font-medium hover:bg-surface-muted" href={`${sweepPath(studioId, sweepId)}/cells?format=csv`} download={`sweep-${sweepId}-cells.csv`}>
                All cells (CSV)
              </a>
              <a className="rounded-md border border-line px-3 py-1.5 font-medium hover:bg-surface-muted" href={`${sweepPath(studioId, sweepId)}/cells`} download={`sweep-${sweepId}-cells.json`}>
                All cells (JSON)
              </a>
              {sweep!.axes.some(isNumericAxis) ? (
                <span className="self-center text-ink-muted">The map itself: “Save PNG” or “Save SVG” above the map (with a title block: sweep, axes, what is shown, tolerances, date).</span>
              ) : null}
            </div>
          </Card>
        </div>
      )}
    </StudioShell>
  );
}

/** One map's cells: the sweep's cell index of each map cell, what the cells show, and their verdicts, reasons and dynamics lines. */
type LayerAt = { indices: Int32Array; layer: MapLayer } & ReturnType<typeof layerData>;

function SweepMaps({ sweep, cells, onOpenCell }: { sweep: Sweep; cells: readonly CellRow[]; onOpenCell: (index: number) => void }) {
  const numericAxes = useMemo(() => sweep.axes.map((axis, i) => (isNumericAxis(axis) ? i : -1)).filter((i) => i >= 0), [sweep.axes]);
  const [xAxis, setXAxis] = useState(numericAxes[0] ?? -1);
  const [yAxis, setYAxis] = useState(numericAxes[1] ?? -1);
  const [slice, setSlice] = useState<number[]>(() => sweep.axes.map(() => 0));
  const [show, setShow] = useState<"verdict" | keyof Metrics>("verdict");
  const [colourRange, setColourRange] = useState(COLOUR_RANGES[0].key);
  const otherAxes = useMemo(() => sweep.axes.map((_, i) => i).filter((i) => i !== xAxis && i !== yAxis), [sweep.axes, xAxis, yAxis]);
  const { compareAxis, gridAxis } = useMemo(() => {
    const only = otherAxes.length === 1 ? sweep.axes[otherAxes[0]] : null;
    return {
      compareAxis: only && !isNumericAxis(only) && only.values.length >= 2 ? otherAxes[0] : -1,
      gridAxis: only && isNumericAxis(only) ? otherAxes[0] : -1,
    };
  }, [sweep.axes, otherAxes]);
  const [mode, setMode] = useState<ViewMode>(compareAxis >= 0 ? "compare" : "single");
  const effectiveMode: ViewMode = mode === "compare" && compareAxis < 0 ? "single" : mode === "grid" && gridAxis < 0 ? "single" : mode;

  const cellsByIndex = useMemo(() => new Map(cells.map((cell) => [cell.index, cell])), [cells]);
  // What the maps draw, kept while the data and the choices stay: a map rebuilds its model and
  // redraws its canvas whenever its axes, layer or overlays are new objects, and the page re-renders
  // for reasons of its own (the studio's name, the session, the envelope arriving). Each redraw was a
  // long task on the main thread in the first second of the page.
  const x = useMemo(() => (xAxis >= 0 ? mapAxisFor(sweep.axes[xAxis]) : null), [sweep.axes, xAxis]);
  const y = useMemo(() => (yAxis >= 0 ? mapAxisFor(sweep.axes[yAxis]) : SINGLE_ROW_AXIS), [sweep.axes, yAxis]);
  const layers = useMemo(() => metricLayersFor(sweep.spec, sweep.axes), [sweep.spec, sweep.axes]);
  const metric = show === "verdict" ? null : (layers.find((layer) => layer.key === show) ?? null);
  const overlays = useMemo((): OverlayInput[] => (xAxis >= 0 && yAxis >= 0 ? overlaysFor(sweep.spec, sweep.axes[xAxis].path, sweep.axes[yAxis].path) : []), [sweep.spec, sweep.axes, xAxis, yAxis]);
  const layerAt = useCallback(
    (sliceChoice: readonly number[]): LayerAt => {
      const indices = mapCellIndices(sweep.axes, { x: xAxis, y: yAxis, slice: sliceChoice });
      const data = layerData(indices, cellsByIndex, metric?.key ?? null);
      const layer: MapLayer = metric
        ? { kind: "metric", label: metric.label, unit: metric.unit, values: data.values, scale: metricScale(metric, sweep.spec.scenario.tolerances ?? {}, colourRange) }
        : { kind: "verdict", verdicts: data.verdicts };
      return { indices, layer, ...data };
    },
    [sweep, cellsByIndex, xAxis, yAxis, metric, colourRange],
  );
  const withSlice = useCallback((axisIndex: number, position: number) => slice.map((value, i) => (i === axisIndex ? position : value)), [slice]);
  // The layers of the layout shown, built once for these cells and choices.
  const single = useMemo(() => (xAxis >= 0 && effectiveMode === "single" ? layerAt(slice) : null), [layerAt, slice, xAxis, effectiveMode]);
  const compared = useMemo(() => {
    if (xAxis < 0 || effectiveMode !== "compare") return null;
    const aPosition = slice[compareAxis];
    const bPosition = aPosition === 0 ? 1 : 0;
    return { aPosition, bPosition, a: layerAt(withSlice(compareAxis, aPosition)), b: layerAt(withSlice(compareAxis, bPosition)) };
  }, [layerAt, withSlice, slice, xAxis, effectiveMode, compareAxis]);
  const gridLayers = useMemo(
    () => (xAxis >= 0 && effectiveMode === "grid" ? sweep.axes[gridAxis].values.map((_, position) => layerAt(withSlice(gridAxis, position))) : null),
    [layerAt, withSlice, sweep.axes, xAxis, effectiveMode, gridAxis],
  );

  if (xAxis < 0 || !x) {
    return (
      <Card title="Stability map">
        <p className="text-sm text-ink-muted">This sweep has no numeric axis to draw a map over; see its cells below and in the exports.</p>
        <CellList cells={cells} onOpenCell={onOpenCell} />
      </Card>
    );
  }

  /** Picks the axis of one side of the map; picking the axis the other side shows swaps the two. */
  const pickAxis = (side: "x" | "y") => (next: number) => {
    const [mine, other, setMine, setOther] = side === "x" ? [xAxis, yAxis, setXAxis, setYAxis] : [yAxis, xAxis, setYAxis, setXAxis];
    if (next === other) setOther(mine);
    setMine(next);
  };
  const axisValueLabel = (axisIndex: number, position: number) => {
    const axis = sweep.axes[axisIndex];
    const value = axis.values[position];
    return formatParameterValue(axis.path, value, axis.unit);
  };

  return (
    <Card title="Stability map">
      <div className="mb-4 grid gap-3 md:grid-cols-4">
        <SelectField id="map-show" label="Show" className={selectClasses} value={show} onChange={(event) => setShow(event.target.value as typeof show)}>
          <option value="verdict">Verdict</option>
          {layers.map((layer) => (
            <option key={layer.key} value={layer.key}>
              {layer.label}
              {layer.unit ? ` [${layer.unit}]` : " [no unit]"}
            </option>
          ))}
        </SelectField>
        {metric && !metric.domain ? (
          <SelectField id="map-colour-range" label="Colour range" className={selectClasses} value={colourRange} onChange={(event) => setColourRange(event.target.value)}>
            {COLOUR_RANGES.map((range) => (
              <option key={range.key} value={range.key}>
                {range.label}
              </option>
            ))}
          </SelectField>
        ) : null}
        <AxisSelect id="map-x" label="Horizontal axis" axes={sweep.axes} choices={numericAxes} value={xAxis} onChange={pickAxis("x")} />
        {numericAxes.length >= 2 ? <AxisSelect id="map-y" label="Vertical axis" axes={sweep.axes} choices={numericAxes} value={yAxis} onChange={pickAxis("y")} /> : null}
        {compareAxis >= 0 || gridAxis >= 0 ? (
          <SelectField id="map-mode" label="Layout" className={selectClasses} value={effectiveMode} onChange={(event) => setMode(event.target.value as ViewMode)}>
            <option value="single">One map (pick {sweep.axes[otherAxes[0]].label})</option>
            {compareAxis >= 0 ? <option value="compare">Compare two {sweep.axes[compareAxis].label}s</option> : null}
            {gridAxis >= 0 ? <option value="grid">Small multiples over {sweep.axes[gridAxis].label}</option> : null}
          </SelectField>
        ) : null}
        {otherAxes
          .filter((i) => !(effectiveMode === "grid" && i === gridAxis))
          .map((i) => (
            <SelectField
              key={i}
              id={`map-slice-${i}`}
              label={
                <>
                  {effectiveMode === "compare" && i === compareAxis ? `${sweep.axes[i].label} of the first map` : sweep.axes[i].label}
                  {isNumericAxis(sweep.axes[i]) ? ` [${sweep.axes[i].unit || "no unit"}]` : ""}
                </>
              }
              className={selectClasses}
              value={slice[i]}
              onChange={(event) => setSlice(withSlice(i, Number(event.target.value)))}
            >
              {sweep.axes[i].values.map((_, position) => (
                <option key={position} value={position}>
                  {axisValueLabel(i, position)}
                </option>
              ))}
            </SelectField>
          ))}
      </div>

      {effectiveMode === "compare" ? (
        (() => {
          const { aPosition, bPosition, a, b } = compared!;
          const sameNote = identicalIntegratorsNote(sweep.spec, sweep.axes[compareAxis].path, sweep.axes[compareAxis].values[aPosition], sweep.axes[compareAxis].values[bPosition], a.verdicts, b.verdicts);
          return (
            <>
            {sameNote ? (
              <p className="mb-2 text-sm" role="note">
                {sameNote}
              </p>
            ) : null}
            <CompareMaps
              x={x}
              y={y}
              a={{ label: axisValueLabel(compareAxis, aPosition), layer: a.layer as Extract<MapLayer, { kind: "metric" } | { kind: "verdict" }>, verdicts: a.verdicts, reasons: a.reasons, extraLines: (mapIndex) => (a.dynamics[mapIndex] ? [a.dynamics[mapIndex] as string] : []) }}
              b={{ label: axisValueLabel(compareAxis, bPosition), layer: b.layer as Extract<MapLayer, { kind: "metric" } | { kind: "verdict" }>, verdicts: b.verdicts, reasons: b.reasons, extraLines: (mapIndex) => (b.dynamics[mapIndex] ? [b.dynamics[mapIndex] as string] : []) }}
              overlays={overlays}
              onCellClick={(mapIndex) => onOpenCell(a.indices[mapIndex])}
            />
            </>
          );
        })()
      ) : effectiveMode === "grid" ? (
        (() => {
          const layers = gridLayers!;
          const third = mapAxisFor(sweep.axes[gridAxis]);
          const order = (sweep.axes[gridAxis].values as number[]).map((_, i) => i).sort((p, q) => (sweep.axes[gridAxis].values[p] as number) - (sweep.axes[gridAxis].values[q] as number));
          return (
            <MapGrid
              x={x}
              y={y}
              third={{ label: third.label, unit: third.unit, values: third.values as number[], quantity: third.quantity }}
              layers={order.map((position) => layers[position].layer)}
              overlays={(thirdValue) => overlaysFor(specWithValue(sweep.spec, sweep.axes[gridAxis].path, thirdValue), sweep.axes[xAxis].path, sweep.axes[yAxis].path)}
              onCellClick={(thirdIndex, mapIndex) => onOpenCell(layers[order[thirdIndex]].indices[mapIndex])}
              reasons={order.map((position) => layers[position].reasons)}
              extraLines={(thirdIndex, mapIndex) => {
                const line = layers[order[thirdIndex]].dynamics[mapIndex];
                return line ? [line] : [];
              }}
            />
          );
        })()
      ) : single ? (
        <StabilityMap
          x={x}
          y={y}
          layer={single.layer}
          verdicts={single.verdicts}
          reasons={single.reasons}
          extraLines={(mapIndex) => (single.dynamics[mapIndex] ? [single.dynamics[mapIndex] as string] : [])}
          overlays={overlays}
          showLegend
          exportFileName={`sweep-${sweep.id}-map`}
          exportTitleBlock={mapTitleBlock({
            sweepName: sweep.name || `Sweep ${sweep.id.slice(0, 8)}`,
            sweepId: sweep.id,
            x,
            y: yAxis >= 0 ? y : null,
            held: otherAxes.map((i) => `${sweep.axes[i].label} = ${axisValueLabel(i, slice[i] ?? 0)}`),
            showing: metric ? `${metric.label}${metric.unit ? ` [${metric.unit}]` : ""}` : "Verdict (symbols as in the legend)",
            tolerances: sweep.spec.scenario.tolerances ?? {},
          })}
          onCellClick={(mapIndex) => onOpenCell(single.indices[mapIndex])}
        />
      ) : null}
      <p className="mt-2 text-xs text-ink-muted">Hatched cells are not computed yet. Click a cell (or focus the map and press Enter) to open its time series and replay.</p>
      <div className="mt-3">
        <HelpPanel />
      </div>
    </Card>
  );
}

function CellList({ cells, onOpenCell }: { cells: readonly CellRow[]; onOpenCell: (index: number) => void }) {
  return (
    <ul className="mt-3 divide-y divide-line text-sm">
      {cells.map((cell) => (
        <li key={cell.index} className="flex justify-between py-1.5">
          <button type="button" className="text-action hover:underline" onClick={() => onOpenCell(cell.index)}>
            Cell {cell.index}
            {cell.axisValues.length > 0 ? `: ${cell.axisValues.join(", ")}` : ""}
          </button>
          <span>{VERDICT_STYLES[cell.verdict].label}</span>
        </li>
      ))}
    </ul>
  );
}

function EnvelopePanel({ studioId, sweep, cells }: { studioId: string; sweep: Sweep; cells: readonly CellRow[] }) {
  const numericAxes = sweep.axes.map((axis, i) => (isNumericAxis(axis) ? i : -1)).filter((i) => i >= 0);
  const [xAxis, setXAxis] = useState(numericAxes[0] ?? -1);
  const [yAxis, setYAxis] = useState(numericAxes[1] ?? -1);
  const [marginPercent, setMarginPercent] = useState(10);
  const [bound, setBound] = useState<"max" | "min">("max");
  // Where the axes other than x and y are held (a position per axis; x and y ignore theirs).
  const [at, setAt] = useState<number[]>(() => sweep.axes.map(() => 0));
  const otherAxes = sweep.axes.map((_, i) => i).filter((i) => i !== xAxis && i !== yAxis);
  const marginValid = Number.isFinite(marginPercent) && marginPercent >= 0 && marginPercent <= 90;
  const query = new URLSearchParams({ x: String(xAxis), y: String(yAxis), margin: String(marginPercent / 100), bound });
  if (otherAxes.length > 0) query.set("at", at.join(","));
  const base = `${sweepPath(studioId, sweep.id)}/envelope`;
  const ready = numericAxes.length >= 2 && xAxis !== yAxis && marginValid;
  const envelope = useQuery({
    queryKey: ["studio", studioId, "sweep", sweep.id, "envelope", query.toString(), sweep.cellsDone],
    queryFn: async () => (await apiFetch<{ envelope: Envelope }>(`${base}?${query}&format=json`)).envelope,
    enabled: ready,
    retry: false,
  });
  if (numericAxes.length < 2) return null;
  const xAxisView = sweep.axes[xAxis];
  const yAxisView = sweep.axes[yAxis];
  // The verdicts under the envelope: the first value of any other axis.
  const envelopeVerdicts = ready
    ? layerData(mapCellIndices(sweep.axes, { x: xAxis, y: yAxis, slice: at }), new Map(cells.map((cell) => [cell.index, cell])), null).verdicts
    : [];

  return (
    <Card title="Safe envelope">
      <p className="mb-3 text-sm text-ink-muted">
        For each value of the first axis, the {bound === "max" ? "largest" : "smallest"} value of the second axis up to which every cell from the start of the axis is stable (safe),
        then the limit: {bound === "max" ? "(1 − margin) × safe" : "safe ÷ (1 − margin)"}. A row waits (pending) while a cell of its walk is not computed. Export it for your game&apos;s config.
        {otherAxes.length > 0 ? " Any other axis is held at the value chosen below." : ""}
      </p>
      <div className="grid gap-3 md:grid-cols-4">
        <AxisSelect id="envelope-x" label="For each" axes={sweep.axes} choices={numericAxes} value={xAxis} onChange={setXAxis} />
        <AxisSelect id="envelope-y" label="Limit on" axes={sweep.axes} choices={numericAxes} value={yAxis} onChange={setYAxis} />
        <TextField
          id="envelope-margin"
          label="Margin"
          unit="%, 0–90"
          type="number"
          min={0}
          max={90}
          step={1}
          className={selectClasses}
          value={Number.isFinite(marginPercent) ? marginPercent : ""}
          error={marginValid ? undefined : "Margin must be between 0 and 90 %."}
          onChange={(event) => setMarginPercent(event.target.value === "" ? Number.NaN : Number(event.target.value))}
        />
        <SelectField id="envelope-bound" label="Bound" className={selectClasses} value={bound} onChange={(event) => setBound(event.target.value as "max" | "min")}>
          <option value="max">Largest stable value</option>
          <option value="min">Smallest stable value</option>
        </SelectField>
      </div>
      {otherAxes.length > 0 ? (
        <div className="mt-3 grid gap-3 md:grid-cols-4">
          {otherAxes.map((i) => (
            <SelectField
              key={i}
              id={`envelope-at-${i}`}
              label={`${sweep.axes[i].label} held at`}
              className={selectClasses}
              value={at[i] ?? 0}
              onChange={(event) => setAt((current) => current.map((position, j) => (j === i ? Number(event.target.value) : position)))}
            >
              {sweep.axes[i].values.map((value, position) => (
                <option key={position} value={position}>
                  {formatParameterValue(sweep.axes[i].path, value, sweep.axes[i].unit)}
                </option>
              ))}
            </SelectField>
          ))}
        </div>
      ) : null}
      {xAxis === yAxis ? <p className="mt-3 text-sm text-danger">Pick two different axes.</p> : null}
      {envelope.isError ? (
        <div className="mt-3">
          <Alert>{errorMessage(envelope.error)}</Alert>
        </div>
      ) : null}
      {envelope.data && xAxisView && yAxisView ? (
        <div className="mt-4 grid gap-4 lg:grid-cols-[minmax(0,1fr)_16rem]">
          <StabilityMap
            x={mapAxisFor(xAxisView)}
            y={mapAxisFor(yAxisView)}
            layer={{ kind: "verdict", verdicts: envelopeVerdicts }}
            verdicts={envelopeVerdicts}
            height={260}
            compact
            overlays={[
              {
                label: `safe ${bound === "max" ? "upper" : "lower"} limit (${marginPercent} % margin)`,
                stroke: "solid",
                points: envelope.data.rows.filter((row) => row.yLimit !== null).map((row) => ({ x: row.x, y: row.yLimit as number })),
              },
            ]}
          />
          <div>
            <DataTable
              testId="envelope-table"
              size="xs"
              rows={envelope.data.rows}
              rowKey={(row) => row.x}
              columns={[
                {
                  key: "x",
                  header: `${xAxisView.label} [${parameterUnitLabel(xAxisView.path, xAxisView.unit)}]`,
                  className: "font-mono",
                  cell: (row) => formatParameterValue(xAxisView.path, row.x, xAxisView.unit),
                },
                {
                  key: "limit",
                  header: `limit [${parameterUnitLabel(yAxisView.path, yAxisView.unit)}]`,
                  className: "font-mono",
                  cell: (row) =>
                    row.status === "pending" ? "pending (cells not computed yet)" : row.yLimit === null ? "none stable" : formatParameterValue(yAxisView.path, row.yLimit, yAxisView.unit),
                },
              ]}
            />
            <div className="mt-3 flex gap-2 text-sm">
              <a className="rounded-md border border-line px-3 py-1.5 font-medium hover:bg-surface-muted" href={`${base}?${query}&format=json`} download={`sweep-${sweep.id}-envelope.json`}>
                Envelope (JSON)
              </a>
              <a className="rounded-md border border-line px-3 py-1.5 font-medium hover:bg-surface-muted" href={`${base}?${query}&format=csv`} download={`sweep-${sweep.id}-envelope.csv`}>
                Envelope (CSV)
              </a>
            </div>
          </div>
        </div>
      ) : envelope.isFetching ? (
        <LoadingRows label="the envelope" />
      ) : null}
    </Card>
  );
}
