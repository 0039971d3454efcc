"use client";
/**
 * A legend on its own canvas, for maps drawn without one (small multiples share a single legend).
 *
 * Props: `scale` (the ResolvedScale the maps share), `counts` per category (categorical scales),
 * `pendingCount` and `noValueCount` (cells not computed yet / without a value, to show their keys),
 * `width` (CSS px, default 220).
 */
import { useLayoutEffect, useRef } from "react";
import type { ResolvedScale } from "./map-model";
import { drawLegend, readChrome } from "./render";
import { useDevicePixelRatio, useThemeVersion } from "./use-canvas-env";

export interface MapLegendProps {
  scale: ResolvedScale;
  counts?: readonly number[];
  pendingCount?: number;
  noValueCount?: number;
  width?: number;
}

export function MapLegend({ scale, counts, pendingCount = 0, noValueCount = 0, width = 220 }: MapLegendProps) {
  const canvasRef = useRef<HTMLCanvasElement>(null);
  const dpr = useDevicePixelRatio();
  const themeVersion = useThemeVersion();
  const rows = scale.kind === "categorical" ? scale.categories.length + (pendingCount > 0 ? 1 : 0) : 0;
  const height = scale.kind === "categorical" ? 30 + rows * 22 : 240;

  useLayoutEffect(() => {
    const canvas = canvasRef.current;
    if (!canvas) return;
    canvas.width = Math.round(width * dpr);
    canvas.height = Math.round(height * dpr);
    const ctx = canvas.getContext("2d");
    if (!ctx) return;
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    ctx.clearRect(0, 0, width, height);
    const model = { scale, counts: [...(counts ?? (scale.kind === "categorical" ? scale.categories.map(() => 0) : []))], pendingCount, noValueCount };
    drawLegend(ctx, model, { left: 4, top: 4, width: width - 12, height: height - 8 }, readChrome(canvas), dpr);
  }, [scale, counts, pendingCount, noValueCount, width, height, dpr, themeVersion]);

  const label =
    scale.kind === "categorical"
      ? `Legend: ${scale.categories.map((c, i) => `${c.label} ${counts?.[i] ?? 0}`).join(", ")}`
      : `Legend: ${scale.label} from ${scale.normalisation.domain[0]} to ${scale.normalisation.domain[1]} ${scale.unit} (${scale.normalisation.kind} scale)`;
  return <canvas ref={canvasRef} role="img" aria-label={label} style={{ width, height }} className="block" />;
}
