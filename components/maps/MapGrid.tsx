"use client";
/**
 * Small multiples for a third swept axis: one small map per value of the third axis, all on one
 * shared scale with one legend; or ("selector") one full-size map and a slider over the third axis.
 *
 * Props:
 * - `x`, `y`: the axes of every map (MapAxis, see StabilityMap).
 * - `third`: { label, unit, values } — the third axis; `layers[i]` is the map at `third.values[i]`.
 * - `layers`: one MapLayer per third-axis value, all metrics or all verdicts.
 * - `mode` / `defaultMode`: "grid" | "selector".
 * - `overlays`: the same curves on every map, or a function of the third-axis value (e.g. the
 *   stability bound moves with mass).
 * - `smallHeight` (CSS px per small map, default 230), `height` (selector map), `minSmallWidth`
 *   (CSS px, default 240: the grid wraps to as many columns as fit).
 * - `onCellClick(thirdIndex, cellIndex)`.
 */
import { useId, useMemo, useState } from "react";
import { formatFrameStep, formatSI } from "@/lib/ui/units";
import { countCodes, PENDING_CODE, verdictCodes } from "@/lib/charts/categories";
import { resolveMetricScale, verdictScale, type MapAxis, type MapLayer, type OverlayInput, type ResolvedScale } from "./map-model";
import { MapLegend } from "./MapLegend";
import { StabilityMap } from "./StabilityMap";

export type MapGridMode = "grid" | "selector";

export interface MapGridProps {
  x: MapAxis;
  y: MapAxis;
  third: { label: string; unit: string; values: readonly number[]; quantity?: MapAxis["quantity"] };
  layers: readonly MapLayer[];
  mode?: MapGridMode;
  defaultMode?: MapGridMode;
  overlays?: readonly OverlayInput[] | ((thirdValue: number) => readonly OverlayInput[]);
  smallHeight?: number;
  height?: number;
  minSmallWidth?: number;
  onCellClick?: (thirdIndex: number, cellIndex: number) => void;
  /** Per map (in third-value order): each cell's verdict reason, for the hover. */
  reasons?: readonly (readonly (string | null)[])[];
  /** Extra hover lines of a cell (e.g. its ω·h and amplification), as on the single map. */
  extraLines?: (thirdIndex: number, cellIndex: number) => string[];
}

export function MapGrid({ x, y, third, layers, mode, defaultMode = "grid", overlays, smallHeight = 230, height = 420, minSmallWidth = 240, onCellClick, reasons, extraLines }: MapGridProps) {
  const [ownMode, setOwnMode] = useState<MapGridMode>(defaultMode);
  const [chosen, setChosen] = useState(0);
  const current = mode ?? ownMode;
  const sliderId = useId();

  const shared = useMemo((): { scale: ResolvedScale; counts: number[]; pending: number; noValue: number } | { error: string } => {
    if (layers.length !== third.values.length) {
      return { error: `layers has ${layers.length} maps for ${third.values.length} values of ${third.label} (third.values)` };
    }
    if (layers.length === 0) return { error: "third.values needs at least one value" };
    const kinds = new Set(layers.map((l) => l.kind));
    if (kinds.size > 1 || kinds.has("categories")) return { error: "layers must be all metrics or all verdicts" };
    let pending = 0;
    let noValue = 0;
    if (layers[0].kind === "metric") {
      const metricLayers = layers as Extract<MapLayer, { kind: "metric" }>[];
      for (const layer of metricLayers) {
        for (let i = 0; i < layer.values.length; i++) {
          const v = layer.values[i];
          if (v === null) noValue++;
          else if (Number.isNaN(v)) pending++;
        }
      }
      const first = metricLayers[0];
      return { scale: resolveMetricScale(first.label, first.unit, metricLayers.map((l) => l.values), first.scale), counts: [], pending, noValue };
    }
    const scale = verdictScale();
    const counts = scale.categories.map(() => 0);
    for (const layer of layers as Extract<MapLayer, { kind: "verdict" }>[]) {
      const codes = verdictCodes(layer.verdicts);
      countCodes(codes, counts.length).forEach((n, i) => (counts[i] += n));
      for (const c of codes) if (c === PENDING_CODE) pending++;
    }
    return { scale, counts, pending, noValue };
  }, [layers, third]);

  // One overlay list per map, kept between renders so the maps do not redraw for nothing.
  const overlaySets = useMemo(() => third.values.map((value) => (typeof overlays === "function" ? overlays(value) : overlays)), [overlays, third]);
  const thirdText = (value: number) => (third.quantity === "frame-step" ? formatFrameStep(value, 4) : formatSI(value, third.unit, 4));
  const valueLabel = (i: number) => `${third.label} = ${thirdText(third.values[i])}`;
  const index = Math.min(chosen, Math.max(0, third.values.length - 1));

  return (
    <section className="space-y-3" aria-label={`Maps for each ${third.label}`}>
      <div role="radiogroup" aria-label="Layout" className="inline-flex overflow-hidden rounded-md border border-line text-sm">
        {(["grid", "selector"] as const).map((option) => (
          <button
            key={option}
            type="button"
            role="radio"
            aria-checked={current === option}
            onClick={() => setOwnMode(option)}
            className={current === option ? "bg-action px-3 py-1.5 font-semibold text-action-ink" : "bg-surface px-3 py-1.5 text-ink hover:bg-surface-muted"}
          >
            {option === "grid" ? "All at once" : `One ${third.label} at a time`}
          </button>
        ))}
      </div>
      {"error" in shared ? (
        <p role="alert" className="text-sm text-danger">
          These maps cannot be drawn — {shared.error}
        </p>
      ) : current === "grid" ? (
        <div className="flex flex-col gap-4 xl:flex-row xl:items-start">
          <div className="grid flex-1 gap-3" style={{ gridTemplateColumns: `repeat(auto-fill, minmax(${minSmallWidth}px, 1fr))` }}>
            {layers.map((layer, i) => (
              <StabilityMap
                key={i}
                title={valueLabel(i)}
                x={x}
                y={y}
                layer={layer}
                scale={shared.scale}
                overlays={overlaySets[i]}
                height={smallHeight}
                compact
                reasons={reasons?.[i]}
                extraLines={extraLines ? (cell) => extraLines(i, cell) : undefined}
                onCellClick={onCellClick ? (cell) => onCellClick(i, cell) : undefined}
              />
            ))}
          </div>
          <div className="rounded-md border border-line bg-surface p-2">
            <MapLegend scale={shared.scale} counts={shared.counts} pendingCount={shared.pending} noValueCount={shared.noValue} />
          </div>
        </div>
      ) : (
        <div className="space-y-3">
          <div className="flex flex-wrap items-center gap-3 text-sm text-ink">
            <label htmlFor={sliderId} className="font-semibold">
              {third.label}
            </label>
            <input
              id={sliderId}
              type="range"
              min={0}
              max={third.values.length - 1}
              step={1}
              value={index}
              onChange={(event) => setChosen(Number(event.target.value))}
              aria-valuetext={thirdText(third.values[index])}
              className="w-64 accent-[var(--kd-action)]"
            />
            <output htmlFor={sliderId} className="font-mono text-ink-muted">
              {thirdText(third.values[index])} ({index + 1} of {third.values.length})
            </output>
          </div>
          <StabilityMap
            title={valueLabel(index)}
            x={x}
            y={y}
            layer={layers[index]}
            scale={shared.scale}
            overlays={overlaySets[index]}
            height={height}
            reasons={reasons?.[index]}
            extraLines={extraLines ? (cell) => extraLines(index, cell) : undefined}
            onCellClick={onCellClick ? (cell) => onCellClick(index, cell) : undefined}
          />
        </div>
      )}
    </section>
  );
}
