/**
 * SVG export of a stability map: the same layout as the canvas (layoutMap), written as vector
 * shapes — cells as rectangles (runs of equal cells in a row merged), glyphs or glyph patterns,
 * axes with their ticks, overlays, the legend and the title block — so the file scales cleanly in
 * documents and its text stays selectable.
 */
import { formatSI } from "@/lib/charts/format";
import { glyphIsFilled, glyphSvgPath } from "@/lib/charts/glyphs";
import { legendTicks, normalise } from "@/lib/charts/normalise";
import { overlayToPixelPaths } from "@/lib/charts/overlays";
import { valueToPixel, type AxisScale } from "@/lib/charts/scales";
import { axisTickLabel, CELL_NO_VALUE, CELL_PENDING, inkOn, type MapAxis, type MapModel } from "./map-model";
import { axisTicks, axisTitle, GLYPH_PATTERN_TILE_PX, layoutMap, LIGHT_CHROME, TITLE_BLOCK_LINE_PX, type ChromeColours } from "./render";
import { scaleNote } from "./scale-note";
import { cellRuns, forEachGlyphCell, GLYPH_MIN_CELL_PX, glyphCellSize } from "./cell-runs";

export interface SvgExportOptions {
  widthCss: number;
  heightCss: number;
  title?: string;
  titleBlock?: readonly string[];
  chrome?: ChromeColours;
}

function esc(text: string): string {
  return text.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");
}

function f(value: number): string {
  return String(Number(value.toFixed(2)));
}

function lutHex(lut: Uint8ClampedArray, index: number): string {
  const i = Math.min(lut.length / 4 - 1, Math.max(0, index)) * 4;
  return `#${[lut[i], lut[i + 1], lut[i + 2]].map((b) => b.toString(16).padStart(2, "0")).join("")}`;
}

/** The fill of a cell code: category colour, LUT colour, grey for no value, the hatch for pending. */
function cellFill(model: MapModel, code: number): string {
  if (code === CELL_PENDING) return "url(#kd-pending)";
  if (code === CELL_NO_VALUE) return "#9e9e9e";
  if (model.scale.kind === "categorical") return model.scale.categories[code]?.colour ?? "#9e9e9e";
  return lutHex(model.scale.lut, code);
}

function measureContext(): CanvasRenderingContext2D {
  const canvas = document.createElement("canvas");
  const ctx = canvas.getContext("2d");
  if (!ctx) throw new Error("2D canvas context unavailable (needed to measure the SVG's text)");
  return ctx;
}

/**
 * One axis's tick marks inside the plot (which starts at `start` px and is `length` px long), at
 * their pixel positions, each with its label, or null where a label would come closer than `gap`
 * px to one already placed.
 */
function axisMarks(scale: AxisScale, start: number, length: number, axis: MapAxis, gap: number): { px: number; label: string | null }[] {
  const marks: { px: number; label: string | null }[] = [];
  const labelled: number[] = [];
  for (const tick of axisTicks(scale, length, false, axis)) {
    const px = valueToPixel(scale, tick.value);
    if (px < start - 0.5 || px > start + length + 0.5) continue;
    const crowded = labelled.some((other) => Math.abs(other - px) < gap);
    if (!crowded) labelled.push(px);
    marks.push({ px, label: crowded ? null : axisTickLabel(axis, tick.value) });
  }
  return marks;
}

/** The map as an SVG document (a string). */
export function mapSvg(model: MapModel, options: SvgExportOptions): string {
  const chrome = options.chrome ?? LIGHT_CHROME;
  const ctx = measureContext();
  const layout = layoutMap(model, ctx, { widthCss: options.widthCss, heightCss: options.heightCss, devicePixelRatio: 1, chrome, title: options.title, titleBlock: options.titleBlock, showLegend: true });
  const { geometry } = layout;
  const { plot } = geometry;
  const W = options.widthCss;
  const H = options.heightCss;
  const out: string[] = [];
  const defs: string[] = [
    `<pattern id="kd-pending" width="6" height="6" patternUnits="userSpaceOnUse"><rect width="6" height="6" fill="${chrome.surface}"/><path d="M0 6L6 0M-3 3L3 -3M3 9L9 3" stroke="${chrome.line}" stroke-width="1"/></pattern>`,
  ];
  out.push(`<rect width="${W}" height="${H}" fill="${chrome.surface}"/>`);
  const fontAttr = `font-family="${esc(chrome.fontFamily)}"`;
  if (options.title) out.push(`<text x="12" y="20" font-size="14" font-weight="600" fill="${chrome.ink}" ${fontAttr}>${esc(options.title)}</text>`);
  (options.titleBlock ?? []).forEach((line, i) => {
    out.push(`<text x="12" y="${f((options.title ? 28 : 6) + i * TITLE_BLOCK_LINE_PX + 12)}" font-size="12" fill="${chrome.inkMuted}" ${fontAttr}>${esc(line)}</text>`);
  });

  // Cells.
  out.push(`<g shape-rendering="crispEdges">`);
  for (const r of cellRuns(model, geometry, () => true)) out.push(`<rect x="${f(r.x)}" y="${f(r.y)}" width="${f(r.w)}" height="${f(r.h)}" fill="${cellFill(model, r.code)}"/>`);
  out.push(`</g>`);

  // Glyphs: one per cell where cells are big enough, a pattern of the glyph where they are not (as on screen).
  if (model.scale.kind === "categorical") {
    const cellSize = glyphCellSize(model, geometry);
    model.scale.categories.forEach((category, code) => {
      if (category.glyph === "none" || model.counts[code] === 0) return;
      const ink = inkOn(category.colour);
      const paint = glyphIsFilled(category.glyph) ? `fill="${ink}" stroke="none"` : `fill="none" stroke="${ink}" stroke-linecap="round" stroke-linejoin="round"`;
      if (cellSize < GLYPH_MIN_CELL_PX) {
        const t = GLYPH_PATTERN_TILE_PX;
        defs.push(
          `<pattern id="kd-glyph-${code}" width="${t}" height="${t}" patternUnits="userSpaceOnUse" x="${f(plot.left)}" y="${f(plot.top)}"><path d="${glyphSvgPath(category.glyph, t / 2, t / 2, t * 0.4)}" ${paint} stroke-width="1.4"/></pattern>`,
        );
        out.push(`<g fill="url(#kd-glyph-${code})" opacity="0.75">`);
        for (const r of cellRuns(model, geometry, (c) => c === code)) out.push(`<rect x="${f(r.x)}" y="${f(r.y)}" width="${f(r.w)}" height="${f(r.h)}"/>`);
        out.push(`</g>`);
        return;
      }
      let d = "";
      forEachGlyphCell(model, geometry, code, (cx, cy, halfSize) => {
        d += glyphSvgPath(category.glyph, cx, cy, halfSize);
      });
      out.push(`<path d="${d}" ${paint} stroke-width="${f(Math.max(1, Math.min(2, cellSize / 10)))}" opacity="0.7"/>`);
    });
  }

  // Axes.
  out.push(`<rect x="${f(plot.left - 0.5)}" y="${f(plot.top - 0.5)}" width="${f(plot.width + 1)}" height="${f(plot.height + 1)}" fill="none" stroke="${chrome.inkMuted}"/>`);
  for (const { px, label } of axisMarks(geometry.x, plot.left, plot.width, model.x, 56)) {
    out.push(`<line x1="${f(px)}" y1="${f(plot.top + plot.height)}" x2="${f(px)}" y2="${f(plot.top + plot.height + 5)}" stroke="${chrome.inkMuted}"/>`);
    if (label !== null) out.push(`<text x="${f(px)}" y="${f(plot.top + plot.height + 19)}" font-size="12" text-anchor="middle" fill="${chrome.ink}" ${fontAttr}>${esc(label)}</text>`);
  }
  for (const { px: py, label } of axisMarks(geometry.y, plot.top, plot.height, model.y, 15)) {
    out.push(`<line x1="${f(plot.left - 5)}" y1="${f(py)}" x2="${f(plot.left)}" y2="${f(py)}" stroke="${chrome.inkMuted}"/>`);
    if (label !== null) out.push(`<text x="${f(plot.left - 8)}" y="${f(py + 4)}" font-size="12" text-anchor="end" fill="${chrome.ink}" ${fontAttr}>${esc(label)}</text>`);
  }
  out.push(`<text x="${f(plot.left + plot.width / 2)}" y="${f(H - 4)}" font-size="12" font-weight="600" text-anchor="middle" fill="${chrome.inkMuted}" ${fontAttr}>${esc(axisTitle(model.x))}</text>`);
  out.push(`<text transform="translate(14 ${f(plot.top + plot.height / 2)}) rotate(-90)" font-size="12" font-weight="600" text-anchor="middle" fill="${chrome.inkMuted}" ${fontAttr}>${esc(axisTitle(model.y))}</text>`);

  // Overlays.
  const dashes: Record<string, string> = { solid: "", dashed: "7 4", dotted: "1.5 3.5" };
  for (const overlay of model.overlays) {
    for (const path of overlayToPixelPaths(overlay, geometry)) {
      let d = `M${f(path[0])} ${f(path[1])}`;
      for (let i = 2; i < path.length; i += 2) d += `L${f(path[i])} ${f(path[i + 1])}`;
      const dash = dashes[overlay.stroke ?? "solid"];
      out.push(`<path d="${d}" fill="none" stroke="rgba(255,255,255,0.85)" stroke-width="4"/><path d="${d}" fill="none" stroke="#111111" stroke-width="1.75"${dash ? ` stroke-dasharray="${dash}"` : ""}><title>${esc(overlay.label)}</title></path>`);
    }
  }

  // Legend.
  const left = plot.left + plot.width + 16;
  const top = plot.top;
  if (model.scale.kind === "categorical") {
    out.push(`<text x="${f(left)}" y="${f(top + 12)}" font-size="12" font-weight="600" fill="${chrome.inkMuted}" ${fontAttr}>${esc(model.scale.label)}</text>`);
    model.scale.categories.forEach((category, code) => {
      const y = top + 26 + code * 22;
      const ink = inkOn(category.colour);
      const paint = glyphIsFilled(category.glyph) ? `fill="${ink}"` : `fill="none" stroke="${ink}" stroke-width="1.5" stroke-linecap="round"`;
      out.push(`<rect x="${f(left)}" y="${f(y)}" width="18" height="18" fill="${category.colour}" stroke="${chrome.line}"/>`);
      if (category.glyph !== "none") out.push(`<path d="${glyphSvgPath(category.glyph, left + 9, y + 9, 6)}" ${paint}/>`);
      out.push(`<text x="${f(left + 26)}" y="${f(y + 13)}" font-size="12" fill="${chrome.ink}" ${fontAttr}>${esc(category.label)}</text>`);
      out.push(`<text x="${f(W - 10)}" y="${f(y + 13)}" font-size="12" text-anchor="end" fill="${chrome.inkMuted}" ${fontAttr}>${(model.counts[code] ?? 0).toLocaleString("en-US")}</text>`);
    });
  } else {
    const scale = model.scale;
    const notes = scaleNote(scale, model.outside);
    const barTop = top + 24;
    const barHeight = Math.max(40, plot.height - 24 - notes.length * 15 - 40);
    const stops: string[] = [];
    const entries = scale.lut.length / 4;
    for (let i = 0; i <= 16; i++) {
      const index = Math.round((i / 16) * (entries - 1));
      stops.push(`<stop offset="${f(1 - i / 16)}" stop-color="${lutHex(scale.lut, index)}"/>`);
    }
    defs.push(`<linearGradient id="kd-bar" x1="0" y1="0" x2="0" y2="1">${stops.reverse().join("")}</linearGradient>`);
    out.push(`<text x="${f(left)}" y="${f(top + 12)}" font-size="12" font-weight="600" fill="${chrome.inkMuted}" ${fontAttr}>${esc(scale.label)}</text>`);
    out.push(`<rect x="${f(left)}" y="${f(barTop)}" width="14" height="${f(barHeight)}" fill="url(#kd-bar)" stroke="${chrome.inkMuted}"/>`);
    const placed: number[] = [];
    for (const tick of legendTicks(scale.normalisation)) {
      const y = barTop + barHeight - normalise(scale.normalisation, tick.value) * barHeight;
      if (placed.some((other) => Math.abs(other - y) < 13)) continue;
      placed.push(y);
      out.push(`<line x1="${f(left + 14)}" y1="${f(y)}" x2="${f(left + 18)}" y2="${f(y)}" stroke="${chrome.inkMuted}"/>`);
      out.push(`<text x="${f(left + 21)}" y="${f(y + 4)}" font-size="11" fill="${chrome.ink}" ${fontAttr}>${esc(formatSI(tick.value, scale.unit))}</text>`);
    }
    notes.forEach((line, i) => out.push(`<text x="${f(left)}" y="${f(barTop + barHeight + 18 + i * 15)}" font-size="11" fill="${chrome.inkMuted}" ${fontAttr}>${esc(line)}</text>`));
  }
  return `<?xml version="1.0" encoding="UTF-8"?>\n<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}"><defs>${defs.join("")}</defs>${out.join("")}</svg>\n`;
}

/** The map as an SVG Blob. */
export function exportMapSvg(model: MapModel, options: SvgExportOptions): Blob {
  return new Blob([mapSvg(model, options)], { type: "image/svg+xml" });
}
