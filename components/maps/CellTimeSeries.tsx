"use client";
/**
 * Drill-down of one cell: its time series as four synchronised charts (recharts) — momentum along
 * x and along y (each body and the total), kinetic, potential and total energy, and the largest
 * overlap — and, in runs with friction, two more: each disc's spin (angular velocity) and the
 * largest slip speed at a sliding contact.
 *
 * Props:
 * - `series`: the engine's TimeSeries (lib/physics/types.ts), SI units.
 * - `bodyLabels` (optional): names per body (default "Disc 1", "Disc 2", …: counted from 1, as the replay and the reasons count them). Per-body momentum lines
 *   are drawn for up to `maxBodyLines` bodies (default 6); beyond that only the total is shown.
 * - `overlapLimitM` (optional): the deep-overlap tolerance in metres, drawn as a reference line.
 * - `maxPoints` (default 800): long series are thinned for drawing, keeping every bucket's extremes.
 * - `chartHeight` (CSS px per chart, default 190).
 *
 * Zoom and pan: the charts show a time window, framed on the contacts by default (the first to the
 * last sample with any overlap, widened by half its length each side); the overview strip below
 * holds a recharts Brush to drag or resize the window, and buttons return to the contacts or the
 * whole run. The window is resampled from the full series, so zooming in shows every sample.
 */
import { useId, useMemo, useState } from "react";
import { Brush, CartesianGrid, Legend, Line, LineChart, ReferenceLine, ResponsiveContainer, Tooltip, XAxis, YAxis } from "recharts";
import type { TimeSeries } from "@/lib/physics/types";
import { contactWindow, pickSampleIndices, pickSampleIndicesIn } from "@/lib/charts/decimate";
import { formatPrecise, formatSI } from "@/lib/charts/format";
import { seriesColour, seriesDash } from "@/lib/charts/series-style";

export interface CellTimeSeriesProps {
  series: TimeSeries;
  bodyLabels?: readonly string[];
  overlapLimitM?: number;
  maxPoints?: number;
  maxBodyLines?: number;
  chartHeight?: number;
}

interface LineSpec {
  key: string;
  label: string;
  colour: string;
  dash: string;
  width: number;
}

type Row = Record<string, number | null>;

/** Why the series cannot be drawn (naming the field), or null. */
export function timeSeriesProblem(series: TimeSeries): string | null {
  const n = series.tS.length;
  if (n === 0) return "series.tS has no samples";
  const check = (field: string, values: readonly number[]) => (values.length !== n ? `${field} has ${values.length} samples but series.tS has ${n}` : null);
  for (const [field, values] of [
    ["series.totalPxNs", series.totalPxNs],
    ["series.totalPyNs", series.totalPyNs],
    ["series.kineticJ", series.kineticJ],
    ["series.potentialJ", series.potentialJ],
    ["series.totalJ", series.totalJ],
    ["series.maxOverlapM", series.maxOverlapM],
  ] as const) {
    const problem = check(field, values);
    if (problem) return problem;
  }
  for (let b = 0; b < series.bodies.length; b++) {
    for (const key of ["xM", "yM", "pxNs", "pyNs", "omegaRadPerS"] as const) {
      const values = series.bodies[b][key];
      const problem = values ? check(`series.bodies[${b}].${key}`, values) : null;
      if (problem) return problem;
    }
  }
  return series.slipMPerS ? check("series.slipMPerS", series.slipMPerS) : null;
}

/** Non-finite numbers (a run that blew up) become gaps instead of breaking the chart's scale. */
function finiteOrNull(value: number): number | null {
  return Number.isFinite(value) ? value : null;
}

const CHART_CHROME =
  "text-ink [&_.recharts-cartesian-axis-tick-value]:fill-ink-muted [&_.recharts-cartesian-grid_line]:stroke-line [&_.recharts-cartesian-axis-line]:stroke-line [&_.recharts-cartesian-axis-tick-line]:stroke-line [&_.recharts-legend-item-text]:!text-ink";

function SeriesChart({
  title,
  unit,
  rows,
  lines,
  syncId,
  height,
  reference,
}: {
  title: string;
  unit: string;
  rows: Row[];
  lines: LineSpec[];
  syncId: string;
  height: number;
  reference?: { y: number; label: string };
}) {
  return (
    <figure className="m-0 rounded-md border border-line bg-surface p-3">
      <figcaption className="mb-1 text-sm font-semibold text-ink">{title}</figcaption>
      <div className={CHART_CHROME} style={{ height }}>
        <ResponsiveContainer width="100%" height="100%">
          <LineChart data={rows} syncId={syncId} margin={{ top: 6, right: 16, bottom: 0, left: 4 }}>
            <CartesianGrid strokeDasharray="2 4" />
            <XAxis
              dataKey="t"
              type="number"
              domain={["dataMin", "dataMax"]}
              tickFormatter={(t: number) => formatSI(t, "s")}
              tick={{ fontSize: 11 }}
              minTickGap={24}
            />
            <YAxis width={84} tickFormatter={(v: number) => formatSI(v, unit)} tick={{ fontSize: 11 }} domain={["auto", "auto"]} />
            <Tooltip
              isAnimationActive={false}
              labelFormatter={(t) => `t = ${formatPrecise(Number(t), "s")}`}
              formatter={(value, name) => [typeof value === "number" ? formatPrecise(value, unit) : "—", name]}
              contentStyle={{ background: "var(--kd-surface)", border: "1px solid var(--kd-line)", borderRadius: 6, color: "var(--kd-ink)", fontSize: 12 }}
              labelStyle={{ color: "var(--kd-ink-muted)" }}
            />
            <Legend wrapperStyle={{ fontSize: 12 }} />
            {reference && <ReferenceLine y={reference.y} stroke="currentColor" strokeDasharray="4 3" label={{ value: reference.label, position: "insideTopRight", fontSize: 11, fill: "currentColor" }} />}
            {lines.map((line) => (
              <Line
                key={line.key}
                dataKey={line.key}
                name={line.label}
                stroke={line.colour}
                strokeDasharray={line.dash || undefined}
                strokeWidth={line.width}
                dot={false}
                isAnimationActive={false}
                connectNulls={false}
                type="linear"
                legendType="plainline"
              />
            ))}
          </LineChart>
        </ResponsiveContainer>
      </div>
    </figure>
  );
}

export function CellTimeSeries({ series, bodyLabels, overlapLimitM, maxPoints = 800, maxBodyLines = 6, chartHeight = 190 }: CellTimeSeriesProps) {
  const syncId = useId();
  const problem = timeSeriesProblem(series);
  const n = series.tS.length;
  const contacts = useMemo(() => (problem ? null : contactWindow(series.maxOverlapM)), [series, problem]);
  const whole: [number, number] = [0, Math.max(0, n - 1)];
  // The window in sample indices; null until the user moves it (then the contact window is used).
  const [chosen, setChosen] = useState<[number, number] | null>(null);
  const window: [number, number] = chosen ?? contacts ?? whole;
  // The overview strip: the total energy and overlap over the whole run, thinned, with the brush.
  const overview = useMemo(() => {
    if (problem) return null;
    const indices = pickSampleIndices(n, [series.maxOverlapM, series.totalJ], 240);
    return { indices, rows: indices.map((i) => ({ t: series.tS[i], overlap: finiteOrNull(series.maxOverlapM[i]) })) };
  }, [series, n, problem]);
  const nearestOverviewRow = (sample: number) => {
    if (!overview) return 0;
    let best = 0;
    for (let r = 0; r < overview.indices.length; r++) if (Math.abs(overview.indices[r] - sample) < Math.abs(overview.indices[best] - sample)) best = r;
    return best;
  };
  const prepared = useMemo(() => {
    if (problem) return null;
    const showBodies = series.bodies.length <= maxBodyLines;
    const thinned = pickSampleIndicesIn(
      window[0],
      window[1],
      [series.totalPxNs, series.totalPyNs, series.totalJ, series.kineticJ, series.potentialJ, series.maxOverlapM, ...(showBodies ? series.bodies.flatMap((b) => [b.pxNs, b.pyNs, ...(b.omegaRadPerS ? [b.omegaRadPerS] : [])]) : []), ...(series.slipMPerS ? [series.slipMPerS] : [])],
      maxPoints,
    );
    const momentum: Row[] = [];
    const energy: Row[] = [];
    const overlap: Row[] = [];
    // Friction runs: spin per disc (or the largest |ω| of many) and the largest slip speed.
    const spinning = series.bodies.length > 0 && series.bodies.every((body) => body.omegaRadPerS !== undefined);
    const spin: Row[] = [];
    const slip: Row[] = [];
    for (const i of thinned) {
      if (spinning) {
        const row: Row = { t: series.tS[i] };
        if (showBodies) series.bodies.forEach((body, b) => (row[`w${b}`] = finiteOrNull(body.omegaRadPerS![i])));
        else {
          let largest = 0;
          for (const body of series.bodies) largest = Math.max(largest, Math.abs(body.omegaRadPerS![i]));
          row.wMax = finiteOrNull(largest);
        }
        spin.push(row);
      }
      if (series.slipMPerS) slip.push({ t: series.tS[i], slip: finiteOrNull(series.slipMPerS[i]) });
    }
    for (const i of thinned) {
      const t = series.tS[i];
      const m: Row = { t, totalX: finiteOrNull(series.totalPxNs[i]), totalY: finiteOrNull(series.totalPyNs[i]) };
      if (showBodies) {
        series.bodies.forEach((body, b) => {
          m[`b${b}x`] = finiteOrNull(body.pxNs[i]);
          m[`b${b}y`] = finiteOrNull(body.pyNs[i]);
        });
      }
      momentum.push(m);
      energy.push({ t, kinetic: finiteOrNull(series.kineticJ[i]), potential: finiteOrNull(series.potentialJ[i]), total: finiteOrNull(series.totalJ[i]) });
      overlap.push({ t, overlap: finiteOrNull(series.maxOverlapM[i]) });
    }
    const hasGaps = [momentum, energy, overlap].some((rows) => rows.some((row) => Object.values(row).some((v) => v === null)));
    const bodyLines = (axis: "x" | "y"): LineSpec[] => [
      ...(showBodies
        ? series.bodies.map((_, b) => ({ key: `b${b}${axis}`, label: bodyLabels?.[b] ?? `Disc ${b + 1}`, colour: seriesColour(b), dash: seriesDash(b), width: 1.5 }))
        : []),
      { key: `total${axis.toUpperCase()}`, label: "Total", colour: "currentColor", dash: "", width: 2.25 },
    ];
    const spinLines: LineSpec[] = showBodies
      ? series.bodies.map((_, b) => ({ key: `w${b}`, label: bodyLabels?.[b] ?? `Disc ${b + 1}`, colour: seriesColour(b), dash: seriesDash(b), width: 1.5 }))
      : [{ key: "wMax", label: "Largest |ω|", colour: "currentColor", dash: "", width: 2 }];
    const inWindow = window[1] - window[0] + 1;
    return {
      momentum,
      energy,
      overlap,
      spin: spinning ? spin : null,
      spinLines,
      slip: series.slipMPerS ? slip : null,
      bodyLines,
      showBodies,
      hasGaps,
      thinnedFrom: thinned.length < inWindow ? inWindow : 0,
      initialEnergy: series.totalJ[0],
    };
    // eslint-disable-next-line react-hooks/exhaustive-deps -- the window's two numbers, not the tuple's identity
  }, [series, bodyLabels, maxPoints, maxBodyLines, problem, window[0], window[1]]);

  if (problem || !prepared) {
    return (
      <p role="alert" className="text-sm text-danger">
        This time series cannot be drawn — {problem}
      </p>
    );
  }
  const isContacts = contacts !== null && window[0] === contacts[0] && window[1] === contacts[1];
  const isWhole = window[0] === 0 && window[1] === n - 1;
  return (
    <div className="space-y-3">
      <div className="flex flex-wrap items-center gap-2 text-sm" role="group" aria-label="Time window">
        <span className="text-ink-muted" data-testid="series-window">
          Showing t = {formatPrecise(series.tS[window[0]], "s")} … {formatPrecise(series.tS[window[1]], "s")}
          {isContacts ? " (the contacts)" : isWhole ? " (the whole run)" : ""}
        </span>
        <button type="button" className="rounded-md border border-line px-2 py-0.5 text-xs font-semibold hover:bg-surface-muted disabled:opacity-50" disabled={!contacts || isContacts} onClick={() => setChosen(contacts)}>
          Frame the contacts
        </button>
        <button type="button" className="rounded-md border border-line px-2 py-0.5 text-xs font-semibold hover:bg-surface-muted disabled:opacity-50" disabled={isWhole} onClick={() => setChosen(whole)}>
          Whole run
        </button>
        {!contacts ? <span className="text-xs text-ink-muted">No contact in this run: the whole run is shown.</span> : null}
      </div>
      {overview && overview.rows.length > 2 ? (
        <figure className="m-0 rounded-md border border-line bg-surface px-3 pt-2" data-testid="series-overview">
          <figcaption className="text-xs text-ink-muted">Overview (overlap over the whole run): drag the handles to zoom, the middle to pan</figcaption>
          <div className={CHART_CHROME} style={{ height: 86 }}>
            <ResponsiveContainer width="100%" height="100%">
              <LineChart data={overview.rows} margin={{ top: 4, right: 16, bottom: 0, left: 92 }}>
                <XAxis dataKey="t" type="number" domain={["dataMin", "dataMax"]} hide />
                <YAxis hide domain={[0, "auto"]} />
                <Line dataKey="overlap" stroke={seriesColour(3)} dot={false} isAnimationActive={false} strokeWidth={1.25} />
                <Brush
                  dataKey="t"
                  height={24}
                  travellerWidth={8}
                  startIndex={nearestOverviewRow(window[0])}
                  endIndex={nearestOverviewRow(window[1])}
                  tickFormatter={(t: number) => formatSI(t, "s")}
                  onChange={(range) => {
                    if (range.startIndex === undefined || range.endIndex === undefined) return;
                    const from = overview.indices[range.startIndex];
                    const to = overview.indices[range.endIndex];
                    if (to > from) setChosen([from, to]);
                  }}
                />
              </LineChart>
            </ResponsiveContainer>
          </div>
        </figure>
      ) : null}
      <div className="grid gap-3 xl:grid-cols-2">
        <SeriesChart title="Momentum along x" unit="N·s" rows={prepared.momentum} lines={prepared.bodyLines("x")} syncId={syncId} height={chartHeight} />
        <SeriesChart title="Momentum along y" unit="N·s" rows={prepared.momentum} lines={prepared.bodyLines("y")} syncId={syncId} height={chartHeight} />
        <SeriesChart
          title="Energy"
          unit="J"
          rows={prepared.energy}
          lines={[
            { key: "kinetic", label: "Kinetic", colour: seriesColour(0), dash: "7 3", width: 1.5 },
            { key: "potential", label: "Contact potential", colour: seriesColour(1), dash: "2 3", width: 1.5 },
            { key: "total", label: "Total", colour: "currentColor", dash: "", width: 2.25 },
          ]}
          syncId={syncId}
          height={chartHeight}
          reference={Number.isFinite(prepared.initialEnergy) ? { y: prepared.initialEnergy, label: "start" } : undefined}
        />
        <SeriesChart
          title="Largest overlap"
          unit="m"
          rows={prepared.overlap}
          lines={[{ key: "overlap", label: "Overlap", colour: seriesColour(3), dash: "", width: 1.75 }]}
          syncId={syncId}
          height={chartHeight}
          reference={overlapLimitM !== undefined && Number.isFinite(overlapLimitM) ? { y: overlapLimitM, label: "deep-overlap limit" } : undefined}
        />
        {prepared.spin ? (
          <SeriesChart title="Spin (angular velocity, counter-clockwise positive)" unit="rad/s" rows={prepared.spin} lines={prepared.spinLines} syncId={syncId} height={chartHeight} />
        ) : null}
        {prepared.slip ? (
          <SeriesChart
            title="Slip speed at a sliding contact (0 while every contact sticks)"
            unit="m/s"
            rows={prepared.slip}
            lines={[{ key: "slip", label: "Largest slip speed", colour: seriesColour(2), dash: "", width: 1.75 }]}
            syncId={syncId}
            height={chartHeight}
          />
        ) : null}
      </div>
      <p className="text-xs text-ink-muted">
        {!prepared.showBodies && `${series.bodies.length} bodies: momentum charts show the total only. `}
        {prepared.thinnedFrom > 0 && `Drawn from ${prepared.momentum.length.toLocaleString("en-US")} of the window's ${prepared.thinnedFrom.toLocaleString("en-US")} samples, keeping each stretch's extremes; zoom in to see every sample. `}
        {prepared.hasGaps && "Gaps mark samples where a value was no longer finite."}
      </p>
    </div>
  );
}
