"use client";
/**
 * The stability map: a canvas heatmap of one metric, or of the verdict, over two swept axes.
 *
 * Props (plain data; the sweep page adapts its results to these):
 * - `x`, `y`: MapAxis — label, SI unit ("N/m", "s"; tick labels add prefixes), the cells' values
 *   along the axis (strictly increasing) and `spacing` ("log" draws cells at their log positions).
 * - `layer`: what the cells show, row-major (index = row · x.values.length + column, row 0 = first
 *   y value, drawn at the bottom):
 *     { kind: "metric", label, unit, values, scale? }  values: number[] | Float64Array, NaN = not
 *        computed yet (hatched, so the map fills in as chunks land), null = no value;
 *        scale: { normalisation: "linear" | "log" | "symmetric", domain?, colours? }.
 *     { kind: "verdict", verdicts }  null/undefined = not computed yet.
 *     { kind: "categories", label, codes, categories }  any categorical map (255 = pending).
 * - `verdicts`, `reasons` (optional, per cell): shown in the tooltip of any layer;
 *   `extraLines(index)` (optional) adds lines of its own (e.g. the A and B values of a difference map).
 * - `overlays` (optional): curves in axis units `{ label, points: {x, y}[] }` or `{ label, y: x => y }`,
 *   typically from lib/charts/overlays.ts (ω·dt = 2, steps per contact, tunnelling threshold).
 * - `scale` (optional): a ResolvedScale shared with other maps (CompareMaps, MapGrid).
 * - `onCellClick(index)`, `selectedIndex`: opening a cell's drill-down.
 * - `title`, `height` (CSS px, default 420), `compact` (small multiples), `showLegend`,
 *   `exportFileName` (shows "Save PNG" and "Save SVG" buttons), `exportTitleBlock` (lines under the
 *   exported title: sweep, axes, metric, tolerances; the export adds its date),
 *   `ref` (StabilityMapHandle: toPngBlob, toPngDataUrl, toSvgText),
 *   `onDraw(ms)` (time of the last full draw, for diagnostics and the benchmark).
 *
 * Keyboard: focus the map (Tab), arrows move between cells, Home/End and PageUp/PageDown jump to
 * the edges, Enter or Space opens the cell. The focused cell is announced to screen readers.
 */
import { useCallback, useId, useImperativeHandle, useLayoutEffect, useMemo, useRef, useState, type CSSProperties, type KeyboardEvent, type MouseEvent, type Ref } from "react";
import type { Verdict } from "@/lib/physics/types";
import { formatPrecise } from "@/lib/charts/format";
import { hitTestCell, cellRect } from "@/lib/charts/scales";
import { VERDICT_STYLES } from "@/lib/charts/categories";
import { axisValueText, buildMapModel, CELL_NO_VALUE, CELL_PENDING, MapInputError, type MapAxis, type MapLayer, type MapModel, type OverlayInput, type ResolvedScale } from "./map-model";
import { readChrome, renderHighlights, renderMap, type MapLayout } from "./render";
import { downloadBlob, exportDateLine, exportMapPng, exportMapPngDataUrl, titleBlockHeight } from "./export";
import { exportMapSvg } from "./svg-export";
import { useDevicePixelRatio, useElementWidth, useThemeVersion } from "./use-canvas-env";

export interface StabilityMapHandle {
  toPngBlob(options?: { scale?: number }): Promise<Blob>;
  toPngDataUrl(options?: { scale?: number }): string;
  toSvgText(): Promise<string>;
}

export interface StabilityMapProps {
  x: MapAxis;
  y: MapAxis;
  layer: MapLayer;
  verdicts?: readonly (Verdict | null | undefined)[];
  reasons?: readonly (string | null | undefined)[];
  extraLines?: (index: number) => string[];
  overlays?: readonly OverlayInput[];
  scale?: ResolvedScale;
  title?: string;
  height?: number;
  compact?: boolean;
  showLegend?: boolean;
  selectedIndex?: number | null;
  onCellClick?: (index: number) => void;
  exportFileName?: string;
  exportTitleBlock?: readonly string[];
  onDraw?: (milliseconds: number) => void;
  className?: string;
  ref?: Ref<StabilityMapHandle>;
}

interface Pointed {
  index: number;
  /** CSS px inside the map box, where the tooltip is anchored. */
  anchorX: number;
  anchorY: number;
}

function describeValue(model: MapModel, layer: MapLayer, index: number): string {
  const code = model.codes[index];
  if (code === CELL_PENDING) return "not computed yet";
  if (code === CELL_NO_VALUE) return "no value";
  if (layer.kind === "metric") {
    const v = layer.values[index] as number;
    return formatPrecise(v, layer.unit);
  }
  if (model.scale.kind === "categorical") return model.scale.categories[code]?.label ?? String(code);
  return String(code);
}

/** The lines of a cell's tooltip (also the screen-reader announcement). */
export function cellDescription(
  model: MapModel,
  layer: MapLayer,
  index: number,
  verdicts?: StabilityMapProps["verdicts"],
  reasons?: StabilityMapProps["reasons"],
  extraLines?: StabilityMapProps["extraLines"],
): string[] {
  const column = index % model.columns;
  const row = Math.floor(index / model.columns);
  const lines = [
    `${model.x.label}: ${axisValueText(model.x, model.x.values[column])}`,
    `${model.y.label}: ${axisValueText(model.y, model.y.values[row])}`,
  ];
  const label = layer.kind === "metric" ? layer.label : layer.kind === "verdict" ? "Verdict" : layer.label;
  lines.push(`${label}: ${describeValue(model, layer, index)}`);
  const verdict = verdicts?.[index];
  if (verdict && layer.kind !== "verdict") lines.push(`Verdict: ${VERDICT_STYLES[verdict].label}`);
  if (extraLines) lines.push(...extraLines(index));
  const reason = reasons?.[index];
  if (reason) lines.push(reason);
  return lines;
}

export function StabilityMap(props: StabilityMapProps) {
  const { x, y, layer, overlays, scale, height = 420, compact = false, showLegend, title, onCellClick, onDraw, selectedIndex = null, verdicts, reasons, extraLines, exportFileName, exportTitleBlock, className, ref } = props;
  const boxRef = useRef<HTMLDivElement>(null);
  const baseRef = useRef<HTMLCanvasElement>(null);
  const highlightRef = useRef<HTMLCanvasElement>(null);
  const layoutRef = useRef<MapLayout | null>(null);
  const width = useElementWidth(boxRef);
  const dpr = useDevicePixelRatio();
  const themeVersion = useThemeVersion();
  const [pointed, setPointed] = useState<Pointed | null>(null);
  const [focusIndex, setFocusIndex] = useState<number | null>(null);
  const [hasFocus, setHasFocus] = useState(false);
  // The layout of the last draw, as state too: the tooltip of a keyboard-focused cell is placed from it during render.
  const [drawnLayout, setDrawnLayout] = useState<MapLayout | null>(null);
  // Cells the last draw showed as not computed yet: 0 once a finished sweep's map shows every cell (what the first-visit bench waits for).
  const [drawnPending, setDrawnPending] = useState<number | null>(null);
  const describedBy = useId();

  const resolved = useMemo((): { model: MapModel } | { error: string } => {
    try {
      return { model: buildMapModel(x, y, layer, overlays, scale) };
    } catch (error) {
      if (error instanceof MapInputError) return { error: error.message };
      throw error;
    }
  }, [x, y, layer, overlays, scale]);
  const model = "model" in resolved ? resolved.model : null;

  // Full redraw only when data, size or theme change; hover and focus use the layer above.
  useLayoutEffect(() => {
    const canvas = baseRef.current;
    if (!canvas || !model || width <= 0) return;
    const started = performance.now();
    const layout = renderMap(canvas, model, {
      widthCss: width,
      heightCss: height,
      devicePixelRatio: dpr,
      chrome: readChrome(canvas),
      compact,
      showLegend,
    });
    onDraw?.(performance.now() - started);
    layoutRef.current = layout;
    setDrawnLayout(layout);
    setDrawnPending(model.pendingCount);
  }, [model, width, height, dpr, themeVersion, compact, showLegend, onDraw]);

  useLayoutEffect(() => {
    const canvas = highlightRef.current;
    const layout = drawnLayout;
    if (!canvas || !layout || !model) return;
    const cells: { index: number; style: "hover" | "focus" | "selected" }[] = [];
    if (selectedIndex !== null && selectedIndex >= 0 && selectedIndex < model.codes.length) cells.push({ index: selectedIndex, style: "selected" });
    if (pointed) cells.push({ index: pointed.index, style: "hover" });
    if (hasFocus && focusIndex !== null) cells.push({ index: focusIndex, style: "focus" });
    renderHighlights(canvas, layout, dpr, cells, readChrome(canvas), model.columns);
  }, [pointed, focusIndex, hasFocus, selectedIndex, drawnLayout, dpr, model]);

  // What an export draws: the map at least 640 px wide, taller by its title block so the plot keeps its size.
  const exportOptions = useCallback(() => {
    const titleBlock = [...(exportTitleBlock ?? []), exportDateLine()];
    return {
      widthCss: Math.max(width, 640),
      heightCss: height + titleBlockHeight(title, titleBlock.length),
      title,
      titleBlock,
      chrome: baseRef.current ? readChrome(baseRef.current) : undefined,
    };
  }, [width, height, title, exportTitleBlock]);

  useImperativeHandle(
    ref,
    () => ({
      toPngBlob: (options) => {
        if (!model) return Promise.reject(new Error("the map has no valid data to export"));
        return exportMapPng(model, { ...exportOptions(), scale: options?.scale });
      },
      toPngDataUrl: (options) => {
        if (!model) throw new Error("the map has no valid data to export");
        return exportMapPngDataUrl(model, { ...exportOptions(), scale: options?.scale });
      },
      toSvgText: () => {
        if (!model) return Promise.reject(new Error("the map has no valid data to export"));
        return exportMapSvg(model, exportOptions()).text();
      },
    }),
    [model, exportOptions],
  );

  const anchorOf = useCallback(
    (index: number): Pointed | null => {
      const layout = drawnLayout;
      if (!layout || !model) return null;
      const r = cellRect(layout.geometry, index % model.columns, Math.floor(index / model.columns));
      return { index, anchorX: r.left + r.width, anchorY: r.top };
    },
    [model, drawnLayout],
  );

  const onPointerMove = (event: MouseEvent<HTMLCanvasElement>) => {
    const layout = layoutRef.current;
    if (!layout) return;
    const box = event.currentTarget.getBoundingClientRect();
    const px = event.clientX - box.left;
    const py = event.clientY - box.top;
    const hit = hitTestCell(layout.geometry, px, py);
    setPointed((previous) => (hit ? (previous?.index === hit.index && Math.abs(previous.anchorX - px) < 1 ? previous : { index: hit.index, anchorX: px, anchorY: py }) : null));
  };

  const onClick = (event: MouseEvent<HTMLCanvasElement>) => {
    const layout = layoutRef.current;
    if (!layout || !onCellClick) return;
    const box = event.currentTarget.getBoundingClientRect();
    const hit = hitTestCell(layout.geometry, event.clientX - box.left, event.clientY - box.top);
    if (hit) {
      setFocusIndex(hit.index);
      onCellClick(hit.index);
    }
  };

  const onKeyDown = (event: KeyboardEvent<HTMLCanvasElement>) => {
    if (!model) return;
    const current = focusIndex ?? 0;
    let column = current % model.columns;
    let row = Math.floor(current / model.columns);
    switch (event.key) {
      case "ArrowRight":
        column = Math.min(model.columns - 1, column + 1);
        break;
      case "ArrowLeft":
        column = Math.max(0, column - 1);
        break;
      case "ArrowUp":
        row = Math.min(model.rows - 1, row + 1);
        break;
      case "ArrowDown":
        row = Math.max(0, row - 1);
        break;
      case "Home":
        column = 0;
        break;
      case "End":
        column = model.columns - 1;
        break;
      case "PageUp":
        row = model.rows - 1;
        break;
      case "PageDown":
        row = 0;
        break;
      case "Enter":
      case " ":
        event.preventDefault();
        onCellClick?.(current);
        return;
      case "Escape":
        setPointed(null);
        return;
      default:
        return;
    }
    event.preventDefault();
    setPointed(null);
    setFocusIndex(row * model.columns + column);
  };

  const save = async (format: "png" | "svg") => {
    if (!model || !exportFileName) return;
    const base = exportFileName.replace(/\.(png|svg)$/i, "");
    const blob = format === "png" ? await exportMapPng(model, exportOptions()) : exportMapSvg(model, exportOptions());
    downloadBlob(blob, `${base}.${format}`);
  };

  const tooltipCell = pointed ?? (hasFocus && focusIndex !== null ? anchorOf(focusIndex) : null);
  const tooltipLines = model && tooltipCell ? cellDescription(model, layer, tooltipCell.index, verdicts, reasons, extraLines) : null;
  const announcement = model && hasFocus && focusIndex !== null ? cellDescription(model, layer, focusIndex, verdicts, reasons, extraLines).join(". ") : "";
  const summary = model ? `${title ?? (layer.kind === "metric" ? layer.label : "Verdict")} map, ${model.columns} by ${model.rows} cells, ${x.label} across, ${y.label} up.` : "";

  return (
    <figure className={`m-0 ${className ?? ""}`}>
      {(title || exportFileName) && (
        <figcaption className="mb-2 flex items-center justify-between gap-3">
          {title ? <span className={compact ? "text-xs font-semibold text-ink" : "text-sm font-semibold text-ink"}>{title}</span> : <span />}
          {exportFileName && model && (
            <span className="flex gap-2">
              {(["png", "svg"] as const).map((format) => (
                <button
                  key={format}
                  type="button"
                  onClick={() => void save(format)}
                  className="rounded-md border border-line bg-surface px-2.5 py-1 text-xs font-semibold text-ink hover:bg-surface-muted"
                >
                  Save {format.toUpperCase()}
                </button>
              ))}
            </span>
          )}
        </figcaption>
      )}
      <div ref={boxRef} className="relative w-full rounded-md border border-line bg-surface" style={{ height }}>
        {"error" in resolved ? (
          <p role="alert" className="p-4 text-sm text-danger">
            This map cannot be drawn — {resolved.error}
          </p>
        ) : (
          <>
            <canvas
              ref={baseRef}
              className="absolute inset-0 block"
              style={{ width: width || "100%", height }}
              role="application"
              aria-roledescription="stability map"
              aria-label={summary}
              aria-describedby={describedBy}
              // The plot rectangle in CSS px, for browser tests and tools that point at cells.
              data-plot={drawnLayout ? [drawnLayout.geometry.plot.left, drawnLayout.geometry.plot.top, drawnLayout.geometry.plot.width, drawnLayout.geometry.plot.height].join(",") : undefined}
              data-pending-cells={drawnPending ?? undefined}
              tabIndex={0}
              onPointerMove={onPointerMove}
              onPointerLeave={() => setPointed(null)}
              onClick={onClick}
              onKeyDown={onKeyDown}
              onFocus={() => {
                setHasFocus(true);
                setFocusIndex((index) => index ?? (selectedIndex !== null && selectedIndex >= 0 ? selectedIndex : 0));
              }}
              onBlur={() => setHasFocus(false)}
            />
            <canvas ref={highlightRef} aria-hidden="true" className="pointer-events-none absolute inset-0 block" style={{ width: width || "100%", height }} />
            {tooltipLines && tooltipCell && (
              <div
                role="tooltip"
                className="pointer-events-none absolute z-10 max-w-72 rounded-md border border-line bg-surface px-3 py-2 text-xs leading-5 text-ink shadow-lg"
                style={tooltipPosition(tooltipCell, width, height)}
              >
                {tooltipLines.map((line, i) => (
                  <div key={i} className={i === 2 ? "font-semibold" : i > 3 ? "text-ink-muted" : undefined}>
                    {line}
                  </div>
                ))}
              </div>
            )}
          </>
        )}
      </div>
      <p id={describedBy} className="sr-only">
        Use the arrow keys to move between cells{onCellClick ? "; press Enter to open a cell" : ""}.
      </p>
      <p aria-live="polite" className="sr-only">
        {announcement}
      </p>
    </figure>
  );
}

/** Keep the tooltip inside the box: to the right of the pointer, flipped left near the edge. */
function tooltipPosition(cell: Pointed, width: number, height: number): CSSProperties {
  const flipX = cell.anchorX > width - 260;
  const flipY = cell.anchorY > height - 120;
  return {
    left: flipX ? undefined : cell.anchorX + 14,
    right: flipX ? width - cell.anchorX + 14 : undefined,
    top: flipY ? undefined : cell.anchorY + 14,
    bottom: flipY ? height - cell.anchorY + 14 : undefined,
  };
}
