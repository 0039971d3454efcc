"use client";
/**
 * Drill-down of one cell: its time series as four synchronised charts (recharts) — momentum along
 * x and along y (each body and the total), kinetic, potential and total energy, and the largest
 * overlap.
 *
 * Props:
 * - `series`: the engine's TimeSeries (lib/physics/types.ts), SI units.
 * - `bodyLabels` (optional): names per body (default "Body 1", "Body 2", …). Per-body momentum lines
 *   are drawn for up to `maxBodyLines` bodies (default 6); beyond that only the total is shown.
 * - `overlapLimitM` (optional): the deep-overlap tolerance in metres, drawn as a reference line.
 * - `maxPoints` (default 800): long series are thinned for drawing, keeping every bucket's extremes.
 * - `chartHeight` (CSS px per chart, default 190).
 */
import { useId, useMemo } from "react";
import { CartesianGrid, Legend, Line, LineChart, ReferenceLine, ResponsiveContainer, Tooltip, XAxis, YAxis } from "recharts";
import type { TimeSeries } from "@/lib/physics/types";
import { pickSampleIndices } from "@/lib/charts/decimate";
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
    for (const key of ["xM", "yM", "pxNs", "pyNs"] as const) {
      const problem = check(`series.bodies[${b}].${key}`, series.bodies[b][key]);
      if (problem) return problem;
    }
  }
  return null;
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
  const prepared = useMemo(() => {
    if (problem) return null;
    const showBodies = series.bodies.length <= maxBodyLines;
    const thinned = pickSampleIndices(
      series.tS.length,
      [series.totalPxNs, series.totalPyNs, series.totalJ, series.kineticJ, series.potentialJ, series.maxOverlapM, ...(showBodies ? series.bodies.flatMap((b) => [b.pxNs, b.pyNs]) : [])],
      maxPoints,
    );
    const momentum: Row[] = [];
    const energy: Row[] = [];
    const overlap: Row[] = [];
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
        ? series.bodies.map((_, b) => ({ key: `b${b}${axis}`, label: bodyLabels?.[b] ?? `Body ${b + 1}`, colour: seriesColour(b), dash: seriesDash(b), width: 1.5 }))
        : []),
      { key: `total${axis.toUpperCase()}`, label: "Total", colour: "currentColor", dash: "", width: 2.25 },
    ];
    return { momentum, energy, overlap, bodyLines, showBodies, hasGaps, thinnedFrom: thinned.length < series.tS.length ? series.tS.length : 0, initialEnergy: series.totalJ[0] };
  }, [series, bodyLabels, maxPoints, maxBodyLines, problem]);

  if (problem || !prepared) {
    return (
      <p role="alert" className="text-sm text-danger">
        This time series cannot be drawn — {problem}
      </p>
    );
  }
  return (
    <div className="space-y-3">
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
      </div>
      <p className="text-xs text-ink-muted">
        {!prepared.showBodies && `${series.bodies.length} bodies: momentum charts show the total only. `}
        {prepared.thinnedFrom > 0 && `Drawn from ${prepared.momentum.length.toLocaleString("en-US")} of ${prepared.thinnedFrom.toLocaleString("en-US")} samples, keeping each stretch's extremes. `}
        {prepared.hasGaps && "Gaps mark samples where a value was no longer finite."}
      </p>
    </div>
  );
}
