"use client";
/**
 * Two stability maps over the same axes (e.g. two integrators), side by side on one shared scale,
 * or as one difference map: B − A on the diverging scale for metrics; for verdicts the categories
 * "same: both stable / only A fails / only B fails / both fail".
 *
 * Props:
 * - `x`, `y`: the shared axes (MapAxis, see StabilityMap).
 * - `a`, `b`: { label (e.g. "Symplectic Euler"), layer (both "metric" or both "verdict"), verdicts?, reasons? }.
 * - `mode` / `defaultMode`: "side-by-side" | "difference" (controlled or not); `onModeChange`.
 * - `overlays`, `height`, `selectedIndex`, `onCellClick(index)` — passed to the maps.
 */
import { useMemo, useState } from "react";
import { comparisonCodes, comparisonStyles, differenceValues } from "@/lib/charts/categories";
import { formatPrecise } from "@/lib/charts/format";
import type { Verdict } from "@/lib/physics/types";
import { resolveMetricScale, verdictScale, type MapAxis, type MapLayer, type OverlayInput, type ResolvedScale } from "./map-model";
import { StabilityMap } from "./StabilityMap";

export type CompareMode = "side-by-side" | "difference";

export interface CompareSide {
  label: string;
  layer: Extract<MapLayer, { kind: "metric" } | { kind: "verdict" }>;
  verdicts?: readonly (Verdict | null | undefined)[];
  reasons?: readonly (string | null | undefined)[];
  /** Extra hover lines of a cell on this side's map (e.g. its ω·h and rebound). */
  extraLines?: (index: number) => string[];
}

export interface CompareMapsProps {
  x: MapAxis;
  y: MapAxis;
  a: CompareSide;
  b: CompareSide;
  mode?: CompareMode;
  defaultMode?: CompareMode;
  onModeChange?: (mode: CompareMode) => void;
  overlays?: readonly OverlayInput[];
  height?: number;
  selectedIndex?: number | null;
  onCellClick?: (index: number) => void;
}

export function CompareMaps({ x, y, a, b, mode, defaultMode = "side-by-side", onModeChange, overlays, height = 380, selectedIndex, onCellClick }: CompareMapsProps) {
  const [ownMode, setOwnMode] = useState<CompareMode>(defaultMode);
  const current = mode ?? ownMode;
  const setMode = (next: CompareMode) => {
    setOwnMode(next);
    onModeChange?.(next);
  };

  const prepared = useMemo(() => {
    if (a.layer.kind !== b.layer.kind) {
      return { error: `a.layer and b.layer must both be metrics or both verdicts (a is ${a.layer.kind}, b is ${b.layer.kind})` } as const;
    }
    if (a.layer.kind === "metric" && b.layer.kind === "metric") {
      const shared: ResolvedScale = resolveMetricScale(a.layer.label, a.layer.unit, [a.layer.values, b.layer.values], a.layer.scale);
      const aValues = a.layer.values;
      const bValues = b.layer.values;
      const difference: MapLayer = {
        kind: "metric",
        label: `${a.layer.label}: ${b.label} − ${a.label}`,
        unit: a.layer.unit,
        values: aValues.length === bValues.length ? differenceValues(aValues, bValues) : [],
        scale: { normalisation: "symmetric" },
      };
      const unit = a.layer.unit;
      const extraLines = (index: number) => [
        `${a.label}: ${valueText(aValues[index], unit)}`,
        `${b.label}: ${valueText(bValues[index], unit)}`,
      ];
      return { shared, difference, extraLines } as const;
    }
    const aVerdicts = (a.layer as { verdicts: readonly (Verdict | null | undefined)[] }).verdicts;
    const bVerdicts = (b.layer as { verdicts: readonly (Verdict | null | undefined)[] }).verdicts;
    if (aVerdicts.length !== bVerdicts.length) {
      return { error: `a.layer.verdicts has ${aVerdicts.length} cells and b.layer.verdicts ${bVerdicts.length}; both maps need the same cells` } as const;
    }
    const difference: MapLayer = {
      kind: "categories",
      label: `${b.label} vs ${a.label}`,
      codes: comparisonCodes(aVerdicts, bVerdicts),
      categories: comparisonStyles(a.label, b.label),
    };
    const extraLines = (index: number) => [`${a.label}: ${aVerdicts[index] ?? "not computed yet"}`, `${b.label}: ${bVerdicts[index] ?? "not computed yet"}`];
    return { shared: verdictScale() as ResolvedScale, difference, extraLines } as const;
  }, [a, b]);

  return (
    <section className="space-y-3" aria-label={`${a.label} compared with ${b.label}`}>
      <div role="radiogroup" aria-label="Comparison view" className="inline-flex overflow-hidden rounded-md border border-line text-sm">
        {(["side-by-side", "difference"] as const).map((option) => (
          <button
            key={option}
            type="button"
            role="radio"
            aria-checked={current === option}
            onClick={() => setMode(option)}
            className={current === option ? "bg-action px-3 py-1.5 font-semibold text-action-ink" : "bg-surface px-3 py-1.5 text-ink hover:bg-surface-muted"}
          >
            {option === "side-by-side" ? "Side by side" : a.layer.kind === "verdict" ? "Where they differ" : `Difference (${b.label} − ${a.label})`}
          </button>
        ))}
      </div>
      {"error" in prepared ? (
        <p role="alert" className="text-sm text-danger">
          These maps cannot be compared — {prepared.error}
        </p>
      ) : current === "side-by-side" ? (
        <div className="grid gap-4 lg:grid-cols-2">
          {[a, b].map((side, i) => (
            <StabilityMap
              key={i}
              title={side.label}
              x={x}
              y={y}
              layer={side.layer}
              scale={prepared.shared}
              verdicts={side.verdicts}
              reasons={side.reasons}
              extraLines={side.extraLines}
              overlays={overlays}
              height={height}
              // One legend for the shared scale, beside the second map.
              showLegend={i === 0 ? false : undefined}
              selectedIndex={selectedIndex}
              onCellClick={onCellClick}
            />
          ))}
        </div>
      ) : (
        <StabilityMap
          title={prepared.difference.kind === "categories" ? `Where ${a.label} and ${b.label} differ` : `${b.label} − ${a.label}`}
          x={x}
          y={y}
          layer={prepared.difference}
          extraLines={prepared.extraLines}
          overlays={overlays}
          height={height + 40}
          selectedIndex={selectedIndex}
          onCellClick={onCellClick}
        />
      )}
    </section>
  );
}

function valueText(value: number | null, unit: string): string {
  if (value === null) return "no value";
  if (Number.isNaN(value)) return "not computed yet";
  return formatPrecise(value, unit);
}
