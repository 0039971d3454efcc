/**
 * PNG export of a stability map: the map is drawn again on a fresh canvas, with its title block,
 * axes, overlays and legend, at the requested size and resolution (no hover outline). The SVG
 * export (svg-export.ts) writes the same layout as vector shapes.
 */
import { type MapModel } from "./map-model";
import { LIGHT_CHROME, renderMap, type ChromeColours } from "./render";

export interface PngExportOptions {
  widthCss: number;
  heightCss: number;
  /** Resolution multiplier (2 gives a sharp image on high-density screens and in documents). */
  scale?: number;
  title?: string;
  /** Lines under the title: the sweep, axes, metric, tolerances and date. */
  titleBlock?: readonly string[];
  chrome?: ChromeColours;
}

function drawForExport(model: MapModel, options: PngExportOptions): HTMLCanvasElement {
  const canvas = document.createElement("canvas");
  renderMap(canvas, model, {
    widthCss: options.widthCss,
    heightCss: options.heightCss,
    devicePixelRatio: options.scale ?? 2,
    chrome: options.chrome ?? LIGHT_CHROME,
    title: options.title,
    titleBlock: options.titleBlock,
    showLegend: true,
  });
  return canvas;
}

/** The map as a PNG Blob. */
export function exportMapPng(model: MapModel, options: PngExportOptions): Promise<Blob> {
  const canvas = drawForExport(model, options);
  return new Promise((resolve, reject) => {
    canvas.toBlob((blob) => (blob ? resolve(blob) : reject(new Error("the browser could not encode the map as PNG"))), "image/png");
  });
}

/** The map as a data: URL (image/png). */
export function exportMapPngDataUrl(model: MapModel, options: PngExportOptions): string {
  return drawForExport(model, options).toDataURL("image/png");
}

/** Offer a Blob as a file download. */
export function downloadBlob(blob: Blob, fileName: string): void {
  const url = URL.createObjectURL(blob);
  const link = document.createElement("a");
  link.href = url;
  link.download = fileName;
  document.body.appendChild(link);
  link.click();
  link.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

/** "Exported 2026-05-01 14:03 UTC": the date line of an export's title block. */
export function exportDateLine(at: Date = new Date()): string {
  return `Exported ${at.toISOString().slice(0, 16).replace("T", " ")} UTC`;
}

/** Extra height (CSS px) an export needs for its title block, so the plot keeps its size. */
export function titleBlockHeight(title: string | undefined, lines: number): number {
  return (title ? 26 : 0) + lines * 16 + (lines > 0 ? 6 : 0);
}
