/**
 * Canvas drawing of a stability map: cells, hatching for cells not computed yet, glyphs on
 * categorical cells, axes with SI-prefixed ticks, overlays, legend. Used by the on-screen map, the
 * PNG export and the benchmark, so what is exported is what is seen.
 *
 * Speed: the cells go into an ImageData at cell resolution once and are scaled by drawImage with
 * smoothing off (one call for evenly spaced cells); there is no per-cell fillRect.
 */
import { formatSI } from "@/lib/charts/format";
import { legendTicks, normalise } from "@/lib/charts/normalise";
import { scaleNote } from "./scale-note";
import { logMinorTicks, logTicks, niceLinearTicks, type Tick } from "@/lib/charts/ticks";
import { frameStepTickValues } from "@/lib/ui/units";
import { cellRect, cellsAreUniform, mapGeometry, valueToPixel, type AxisScale, type MapGeometry, type PlotRect } from "@/lib/charts/scales";
import { overlayToPixelPaths } from "@/lib/charts/overlays";
import type { GlyphName } from "@/lib/charts/categories";
import { glyphIsFilled, traceGlyph } from "@/lib/charts/glyphs";
import { lutColourCss } from "@/lib/charts/colormaps";
import { axisTickLabel, inkOn, type MapAxis, type MapModel } from "./map-model";
import { cellRuns, forEachGlyphCell, GLYPH_MIN_CELL_PX, glyphCellSize } from "./cell-runs";

/** Theme colours of the chrome (text, lines, background); the data colours are the map's own. */
export interface ChromeColours {
  surface: string;
  ink: string;
  inkMuted: string;
  line: string;
  focus: string;
  fontFamily: string;
}

export const LIGHT_CHROME: ChromeColours = {
  surface: "#ffffff",
  ink: "#161b24",
  inkMuted: "#4b5363",
  line: "#d8d3c7",
  focus: "#d9481c",
  fontFamily: "ui-sans-serif, system-ui, sans-serif",
};

/**
 * Read the palette tokens of app/globals.css from an element (falls back to the light theme).
 * The tokens are light-dark(light, dark) pairs, which a custom property hands back unresolved, and a
 * canvas needs a plain colour: each token is set as a hidden probe's `color`, under the element's
 * colour scheme, and the probe's computed colour is read back.
 */
export function readChrome(element: Element): ChromeColours {
  const style = getComputedStyle(element);
  const probe = element.ownerDocument.createElement("span");
  probe.style.display = "none";
  probe.style.colorScheme = style.colorScheme;
  element.ownerDocument.documentElement.append(probe);
  const token = (name: string, fallback: string) => {
    probe.style.color = "";
    probe.style.color = style.getPropertyValue(name).trim();
    return probe.style.color ? asHex(getComputedStyle(probe).color) : fallback;
  };
  try {
    return {
      surface: token("--kd-surface", LIGHT_CHROME.surface),
      ink: token("--kd-ink", LIGHT_CHROME.ink),
      inkMuted: token("--kd-ink-muted", LIGHT_CHROME.inkMuted),
      line: token("--kd-line", LIGHT_CHROME.line),
      focus: token("--kd-focus", LIGHT_CHROME.focus),
      fontFamily: style.fontFamily || LIGHT_CHROME.fontFamily,
    };
  } finally {
    probe.remove();
  }
}

/** `rgb(r, g, b)` as `#rrggbb`, the form the tokens are written in; any other colour as it is. */
function asHex(colour: string): string {
  const rgb = /^rgb\((\d+), (\d+), (\d+)\)$/.exec(colour);
  return rgb ? `#${rgb.slice(1).map((c) => Number(c).toString(16).padStart(2, "0")).join("")}` : colour;
}

export interface RenderOptions {
  widthCss: number;
  heightCss: number;
  devicePixelRatio: number;
  chrome: ChromeColours;
  /** Title drawn above the plot (PNG export); on screen the title is HTML. */
  title?: string;
  /** Lines under the title (exports): what the map is of, its axes, metric, tolerances and date. */
  titleBlock?: readonly string[];
  /** Small multiples: smaller type, no legend, fewer ticks. */
  compact?: boolean;
  showLegend?: boolean;
  /** Draw glyphs on categorical cells: when cells are big enough ("auto"), always, or never. */
  glyphs?: "auto" | "always" | "never";
}

/** Where things ended up, for hit-testing and the hover layer. */
export interface MapLayout {
  geometry: MapGeometry;
  widthCss: number;
  heightCss: number;
}

const TICK_LENGTH = 5;
export const TITLE_BLOCK_LINE_PX = 16;

function font(chrome: ChromeColours, sizePx: number, weight = 400): string {
  return `${weight} ${sizePx}px ${chrome.fontFamily}`;
}

export function axisTicks(scale: AxisScale, lengthPx: number, compact: boolean, axis?: MapAxis): Tick[] {
  const [lo, hi] = scale.domain;
  if (axis?.quantity === "frame-step") {
    return frameStepTickValues(lo, hi, axis.values, compact ? 4 : Math.max(3, Math.floor(lengthPx / 48))).map((value) => ({ value, major: true }));
  }
  if (scale.spacing === "log") return logTicks(lo, hi, compact ? 4 : Math.max(3, Math.floor(lengthPx / 48)));
  return niceLinearTicks(lo, hi, Math.max(2, Math.floor(lengthPx / (compact ? 70 : 80))));
}

/** Unlabelled 2 … 9 marks on a log axis, when its decades are far enough apart to hold them. */
function minorMarks(scale: AxisScale, lengthPx: number): number[] {
  if (scale.spacing !== "log") return [];
  const decades = Math.log10(scale.domain[1]) - Math.log10(scale.domain[0]);
  if (lengthPx / decades < 60) return [];
  return logMinorTicks(scale.domain[0], scale.domain[1]);
}

export function legendWidth(model: MapModel, ctx: CanvasRenderingContext2D, chrome: ChromeColours): number {
  ctx.font = font(chrome, 12);
  if (model.scale.kind === "categorical") {
    let widest = 0;
    model.scale.categories.forEach((c, i) => {
      widest = Math.max(widest, ctx.measureText(`${c.label}  ${model.counts[i].toLocaleString("en-US")}`).width);
    });
    if (model.pendingCount > 0) widest = Math.max(widest, ctx.measureText(`Not computed  ${model.pendingCount.toLocaleString("en-US")}`).width);
    ctx.font = font(chrome, 12, 600);
    const title = ctx.measureText(model.scale.label).width;
    return Math.min(280, Math.ceil(Math.max(widest + 18 + 8 + 16, title + 4)));
  }
  const ticks = legendTicks(model.scale.normalisation);
  ctx.font = font(chrome, 12, 600);
  let widest = ctx.measureText(model.scale.label).width - 40;
  ctx.font = font(chrome, 12);
  for (const t of ticks) widest = Math.max(widest, ctx.measureText(formatSI(t.value, model.scale.unit)).width);
  if (model.pendingCount > 0) widest = Math.max(widest, ctx.measureText("Not computed").width);
  if (model.noValueCount > 0) widest = Math.max(widest, ctx.measureText("No value").width);
  return Math.min(280, Math.ceil(widest) + 14 + 8 + 26);
}

/** The text, shortened with an ellipsis to fit maxWidth in the current font. */
function fitText(ctx: CanvasRenderingContext2D, text: string, maxWidth: number): string {
  if (ctx.measureText(text).width <= maxWidth) return text;
  let end = text.length;
  while (end > 1 && ctx.measureText(`${text.slice(0, end)}…`).width > maxWidth) end--;
  return `${text.slice(0, end)}…`;
}

/** Plot rectangle for a canvas of this size (margins fit the tick labels, legend and title). */
export function layoutMap(model: MapModel, ctx: CanvasRenderingContext2D, options: RenderOptions): MapLayout {
  const compact = options.compact ?? false;
  const fontSize = compact ? 10 : 12;
  ctx.font = font(options.chrome, fontSize);
  // y tick label width: measure against a provisional scale (ticks depend on the domain, not pixels much).
  const provisional = mapGeometry({ left: 0, top: 0, width: 100, height: Math.max(40, options.heightCss - 60) }, model.x, model.y);
  const yTicks = axisTicks(provisional.y, options.heightCss - 60, compact, model.y);
  let yLabelWidth = 0;
  for (const t of yTicks) yLabelWidth = Math.max(yLabelWidth, ctx.measureText(axisTickLabel(model.y, t.value)).width);
  const titleHeight = (options.title ? 26 : 0) + (options.titleBlock?.length ?? 0) * TITLE_BLOCK_LINE_PX + (options.titleBlock?.length ? 6 : 0);
  const left = Math.ceil(yLabelWidth) + TICK_LENGTH + 6 + (compact ? 14 : 20);
  const bottom = TICK_LENGTH + fontSize + 8 + (compact ? 14 : 20);
  const top = 8 + titleHeight;
  const showLegend = (options.showLegend ?? !compact) && !compact;
  const right = showLegend ? legendWidth(model, ctx, options.chrome) + 12 : 12;
  const plot: PlotRect = {
    left,
    top,
    width: Math.max(20, options.widthCss - left - right),
    height: Math.max(20, options.heightCss - top - bottom),
  };
  return { geometry: mapGeometry(plot, model.x, model.y), widthCss: options.widthCss, heightCss: options.heightCss };
}

let scratch: HTMLCanvasElement | OffscreenCanvas | null = null;
function scratchCanvas(width: number, height: number): HTMLCanvasElement | OffscreenCanvas {
  if (!scratch) scratch = typeof OffscreenCanvas !== "undefined" ? new OffscreenCanvas(width, height) : document.createElement("canvas");
  if (scratch.width !== width) scratch.width = width;
  if (scratch.height !== height) scratch.height = height;
  return scratch;
}

function hatchPattern(ctx: CanvasRenderingContext2D, chrome: ChromeColours, dpr: number): CanvasPattern | null {
  const size = Math.max(4, Math.round(6 * dpr));
  const tile = typeof OffscreenCanvas !== "undefined" ? new OffscreenCanvas(size, size) : document.createElement("canvas");
  tile.width = size;
  tile.height = size;
  const t = tile.getContext("2d") as CanvasRenderingContext2D | OffscreenCanvasRenderingContext2D | null;
  if (!t) return null;
  t.fillStyle = chrome.surface;
  t.fillRect(0, 0, size, size);
  t.strokeStyle = chrome.line;
  t.lineWidth = Math.max(1, dpr);
  t.beginPath();
  // Two strokes so the diagonal tiles seamlessly.
  t.moveTo(0, size);
  t.lineTo(size, 0);
  t.moveTo(-size / 2, size / 2);
  t.lineTo(size / 2, -size / 2);
  t.moveTo(size / 2, size * 1.5);
  t.lineTo(size * 1.5, size / 2);
  t.stroke();
  const pattern = ctx.createPattern(tile, "repeat");
  // The pattern lives in device pixels; undo the context's DPR scale.
  pattern?.setTransform(new DOMMatrix([1 / dpr, 0, 0, 1 / dpr, 0, 0]));
  return pattern;
}

/** Draw the cells into the plot rectangle (context in CSS pixels, scaled by dpr). */
function drawCells(ctx: CanvasRenderingContext2D, model: MapModel, geometry: MapGeometry, dpr: number): void {
  const { plot } = geometry;
  ctx.imageSmoothingEnabled = false;
  const uniform = cellsAreUniform(geometry.xEdges, model.x.spacing) && cellsAreUniform(geometry.yEdges, model.y.spacing);
  if (uniform) {
    const canvas = scratchCanvas(model.columns, model.rows);
    const c = canvas.getContext("2d") as CanvasRenderingContext2D | OffscreenCanvasRenderingContext2D | null;
    if (!c) return;
    const image = c.createImageData(model.columns, model.rows);
    new Uint32Array(image.data.buffer).set(model.pixels);
    c.putImageData(image, 0, 0);
    ctx.drawImage(canvas, 0, 0, model.columns, model.rows, plot.left, plot.top, plot.width, plot.height);
    return;
  }
  // Uneven cells: map each device pixel of the plot to its cell through per-column / per-row tables.
  const widthPx = Math.max(1, Math.round(plot.width * dpr));
  const heightPx = Math.max(1, Math.round(plot.height * dpr));
  const columnOf = new Int32Array(widthPx);
  const rowOf = new Int32Array(heightPx);
  let column = 0;
  for (let px = 0; px < widthPx; px++) {
    const xCss = plot.left + (px + 0.5) / dpr;
    while (column < model.columns - 1 && valueToPixel(geometry.x, geometry.xEdges[column + 1]) <= xCss) column++;
    columnOf[px] = column;
  }
  let row = model.rows - 1;
  for (let py = 0; py < heightPx; py++) {
    const yCss = plot.top + (py + 0.5) / dpr;
    while (row > 0 && valueToPixel(geometry.y, geometry.yEdges[row]) <= yCss) row--;
    rowOf[py] = model.rows - 1 - row;
  }
  const canvas = scratchCanvas(widthPx, heightPx);
  const c = canvas.getContext("2d") as CanvasRenderingContext2D | OffscreenCanvasRenderingContext2D | null;
  if (!c) return;
  const image = c.createImageData(widthPx, heightPx);
  const out = new Uint32Array(image.data.buffer);
  for (let py = 0; py < heightPx; py++) {
    const source = rowOf[py] * model.columns;
    const target = py * widthPx;
    for (let px = 0; px < widthPx; px++) out[target + px] = model.pixels[source + columnOf[px]];
  }
  c.putImageData(image, 0, 0);
  ctx.drawImage(canvas, 0, 0, widthPx, heightPx, plot.left, plot.top, plot.width, plot.height);
}


/** Side of the tile (CSS px) of the pattern that stands in for glyphs on cells too small to hold one. */
export const GLYPH_PATTERN_TILE_PX = 12;

/** Paints the glyph path just traced in `ink`: filled glyphs are filled, line glyphs stroked with the context's current line width. */
function paintGlyphPath(ctx: CanvasRenderingContext2D, glyph: GlyphName, ink: string): void {
  if (glyphIsFilled(glyph)) {
    ctx.fillStyle = ink;
    ctx.fill();
  } else {
    ctx.strokeStyle = ink;
    ctx.stroke();
  }
}

/** A repeating tile with one glyph in the category's ink, anchored at the plot's corner. */
function glyphPattern(ctx: CanvasRenderingContext2D, glyph: GlyphName, ink: string, dpr: number, origin: { left: number; top: number }): CanvasPattern | null {
  const size = Math.max(6, Math.round(GLYPH_PATTERN_TILE_PX * dpr));
  const tile = typeof OffscreenCanvas !== "undefined" ? new OffscreenCanvas(size, size) : document.createElement("canvas");
  tile.width = size;
  tile.height = size;
  const t = tile.getContext("2d") as CanvasRenderingContext2D | null;
  if (!t) return null;
  t.lineCap = "round";
  t.lineJoin = "round";
  t.lineWidth = Math.max(1, 1.4 * dpr);
  t.beginPath();
  traceGlyph(t, glyph, size / 2, size / 2, size * 0.4);
  paintGlyphPath(t, glyph, ink);
  const pattern = ctx.createPattern(tile, "repeat");
  // The tile lives in device pixels; undo the context's DPR scale and start the tiling at the plot's corner.
  pattern?.setTransform(new DOMMatrix([1 / dpr, 0, 0, 1 / dpr, origin.left, origin.top]));
  return pattern;
}

/**
 * Glyphs on categorical cells, so the map reads without colour. Cells big enough get one glyph
 * each; on denser maps each category's cells are filled with a repeating pattern of its glyph
 * instead, so a region of one verdict still carries its symbol however small the cells are.
 */
function drawGlyphs(ctx: CanvasRenderingContext2D, model: MapModel, geometry: MapGeometry, mode: "auto" | "always" | "never", dpr: number): void {
  if (model.scale.kind !== "categorical" || mode === "never") return;
  const categories = model.scale.categories;
  const cellSize = glyphCellSize(model, geometry);
  ctx.save();
  ctx.lineCap = "round";
  ctx.lineJoin = "round";
  if (mode === "auto" && cellSize < GLYPH_MIN_CELL_PX) {
    categories.forEach((category, code) => {
      if (category.glyph === "none" || model.counts[code] === 0) return;
      // The category's cells as one path, neighbouring cells of a row merged into one rectangle.
      ctx.beginPath();
      for (const run of cellRuns(model, geometry, (c) => c === code)) ctx.rect(run.x, run.y, run.w, run.h);
      const pattern = glyphPattern(ctx, category.glyph, inkOn(category.colour), dpr, geometry.plot);
      if (!pattern) return;
      ctx.globalAlpha = 0.75;
      ctx.fillStyle = pattern;
      ctx.fill();
      ctx.globalAlpha = 1;
    });
    ctx.restore();
    return;
  }
  ctx.lineWidth = Math.max(1, Math.min(2, cellSize / 10));
  // One path per category: a few thousand glyphs cost a handful of stroke calls.
  categories.forEach((category, code) => {
    if (category.glyph === "none" || model.counts[code] === 0) return;
    ctx.beginPath();
    forEachGlyphCell(model, geometry, code, (cx, cy, halfSize) => traceGlyph(ctx, category.glyph, cx, cy, halfSize));
    ctx.globalAlpha = 0.7;
    paintGlyphPath(ctx, category.glyph, inkOn(category.colour));
    ctx.globalAlpha = 1;
  });
  ctx.restore();
}

function drawAxes(ctx: CanvasRenderingContext2D, model: MapModel, geometry: MapGeometry, options: RenderOptions): void {
  const { plot } = geometry;
  const { chrome } = options;
  const compact = options.compact ?? false;
  const fontSize = compact ? 10 : 12;
  ctx.save();
  ctx.strokeStyle = chrome.inkMuted;
  ctx.fillStyle = chrome.ink;
  ctx.lineWidth = 1;
  ctx.strokeRect(plot.left - 0.5, plot.top - 0.5, plot.width + 1, plot.height + 1);
  ctx.font = font(chrome, fontSize);

  // x ticks: skip labels that would collide with the previous one (minor ticks go first).
  const xTicks = axisTicks(geometry.x, plot.width, compact, model.x);
  ctx.textAlign = "center";
  ctx.textBaseline = "top";
  let lastRight = Number.NEGATIVE_INFINITY;
  const ordered = [...xTicks.filter((t) => t.major), ...xTicks.filter((t) => !t.major)];
  const drawnX: [number, number][] = [];
  for (const tick of ordered) {
    const px = valueToPixel(geometry.x, tick.value);
    if (px < plot.left - 0.5 || px > plot.left + plot.width + 0.5) continue;
    ctx.beginPath();
    ctx.moveTo(Math.round(px) + 0.5, plot.top + plot.height);
    ctx.lineTo(Math.round(px) + 0.5, plot.top + plot.height + (tick.major ? TICK_LENGTH : TICK_LENGTH - 2));
    ctx.stroke();
    const label = axisTickLabel(model.x, tick.value);
    const half = ctx.measureText(label).width / 2;
    if (drawnX.some(([a, b]) => px - half < b + 6 && px + half > a - 6)) continue;
    drawnX.push([px - half, px + half]);
    ctx.fillText(label, px, plot.top + plot.height + TICK_LENGTH + 3);
    lastRight = Math.max(lastRight, px + half);
  }
  // Minor marks of log axes (no labels).
  ctx.beginPath();
  for (const value of minorMarks(geometry.x, plot.width)) {
    const px = Math.round(valueToPixel(geometry.x, value)) + 0.5;
    ctx.moveTo(px, plot.top + plot.height);
    ctx.lineTo(px, plot.top + plot.height + 3);
  }
  for (const value of minorMarks(geometry.y, plot.height)) {
    const py = Math.round(valueToPixel(geometry.y, value)) + 0.5;
    ctx.moveTo(plot.left, py);
    ctx.lineTo(plot.left - 3, py);
  }
  ctx.stroke();
  // y ticks
  const yTicks = axisTicks(geometry.y, plot.height, compact, model.y);
  ctx.textAlign = "right";
  ctx.textBaseline = "middle";
  const drawnY: [number, number][] = [];
  for (const tick of [...yTicks.filter((t) => t.major), ...yTicks.filter((t) => !t.major)]) {
    const py = valueToPixel(geometry.y, tick.value);
    if (py < plot.top - 0.5 || py > plot.top + plot.height + 0.5) continue;
    ctx.beginPath();
    ctx.moveTo(plot.left, Math.round(py) + 0.5);
    ctx.lineTo(plot.left - (tick.major ? TICK_LENGTH : TICK_LENGTH - 2), Math.round(py) + 0.5);
    ctx.stroke();
    if (drawnY.some(([a, b]) => py - fontSize / 2 < b + 3 && py + fontSize / 2 > a - 3)) continue;
    drawnY.push([py - fontSize / 2, py + fontSize / 2]);
    ctx.fillText(axisTickLabel(model.y, tick.value), plot.left - TICK_LENGTH - 3, py);
  }
  // Axis labels (the unit is on every tick label, so the label is the quantity's name).
  ctx.fillStyle = chrome.inkMuted;
  ctx.font = font(chrome, fontSize, 600);
  ctx.textAlign = "center";
  ctx.textBaseline = "bottom";
  ctx.fillText(axisTitle(model.x), plot.left + plot.width / 2, options.heightCss - 2);
  ctx.save();
  ctx.translate(fontSize + 2, plot.top + plot.height / 2);
  ctx.rotate(-Math.PI / 2);
  ctx.textBaseline = "bottom";
  ctx.fillText(axisTitle(model.y), 0, 0);
  ctx.restore();
  ctx.restore();
}

export function axisTitle(axis: { label: string; spacing: string }): string {
  return axis.spacing === "log" ? `${axis.label} (log scale)` : axis.label;
}

const OVERLAY_DASHES: Record<string, number[]> = { solid: [], dashed: [7, 4], dotted: [1.5, 3.5] };

function drawOverlays(ctx: CanvasRenderingContext2D, model: MapModel, geometry: MapGeometry, chrome: ChromeColours, compact: boolean): void {
  if (model.overlays.length === 0) return;
  const { plot } = geometry;
  ctx.save();
  ctx.beginPath();
  ctx.rect(plot.left, plot.top, plot.width, plot.height);
  ctx.clip();
  ctx.lineJoin = "round";
  ctx.lineCap = "round";
  const labelled: { text: string; paths: number[][] }[] = [];
  for (const overlay of model.overlays) {
    const paths = overlayToPixelPaths(overlay, geometry);
    const dash = OVERLAY_DASHES[overlay.stroke ?? "solid"];
    // A light halo under a dark line keeps the curve readable over dark and light cells alike.
    for (const [width, colour] of [
      [4, "rgba(255,255,255,0.85)"],
      [1.75, "#111111"],
    ] as const) {
      ctx.lineWidth = width;
      ctx.strokeStyle = colour;
      ctx.setLineDash(width > 2 ? [] : dash);
      for (const path of paths) {
        ctx.beginPath();
        ctx.moveTo(path[0], path[1]);
        for (let i = 2; i < path.length; i += 2) ctx.lineTo(path[i], path[i + 1]);
        ctx.stroke();
      }
    }
    ctx.setLineDash([]);
    if (!compact && paths.length > 0) labelled.push({ text: overlay.label, paths });
  }
  ctx.font = font(chrome, 11, 600);
  ctx.textBaseline = "middle";
  ctx.textAlign = "left";
  // Each label sits beside its curve at the first spot along it that stays inside the plot and
  // clear of the labels already placed.
  const placed: PlotRect[] = [];
  const overlaps = (a: PlotRect, b: PlotRect) => a.left < b.left + b.width + 2 && b.left < a.left + a.width + 2 && a.top < b.top + b.height + 2 && b.top < a.top + a.height + 2;
  for (const { text, paths } of labelled) {
    const width = ctx.measureText(text).width + 6;
    const height = 16;
    const points: [number, number][] = [];
    for (const path of paths) for (let i = 0; i < path.length; i += 2) points.push([path[i], path[i + 1]]);
    let chosen: PlotRect | null = null;
    for (const fraction of [0.5, 0.38, 0.62, 0.26, 0.74, 0.14, 0.86, 0.04, 0.96]) {
      const [px, py] = points[Math.min(points.length - 1, Math.floor(fraction * points.length))];
      const box = { left: px + 6, top: py - height - 2, width, height };
      if (box.left + box.width > plot.left + plot.width - 2) box.left = px - width - 6;
      if (box.top < plot.top + 2) box.top = py + 4;
      const inside = box.left >= plot.left + 2 && box.top >= plot.top + 2 && box.left + box.width <= plot.left + plot.width - 2 && box.top + box.height <= plot.top + plot.height - 2;
      if (inside && !placed.some((other) => overlaps(box, other))) {
        chosen = box;
        break;
      }
    }
    if (!chosen) continue;
    placed.push(chosen);
    ctx.fillStyle = "rgba(255,255,255,0.88)";
    ctx.fillRect(chosen.left, chosen.top, chosen.width, chosen.height);
    ctx.fillStyle = "#111111";
    ctx.fillText(text, chosen.left + 3, chosen.top + height / 2);
  }
  ctx.restore();
}

/** Draw the legend into a rectangle (used beside the map and on its own for small multiples). */
export function drawLegend(ctx: CanvasRenderingContext2D, model: Pick<MapModel, "scale" | "counts" | "pendingCount" | "noValueCount"> & Partial<Pick<MapModel, "outside">>, rect: PlotRect, chrome: ChromeColours, dpr: number): void {
  ctx.save();
  ctx.font = font(chrome, 12);
  ctx.fillStyle = chrome.ink;
  ctx.textBaseline = "middle";
  ctx.textAlign = "left";
  const hatch = hatchPattern(ctx, chrome, dpr);
  if (model.scale.kind === "categorical") {
    const rowHeight = 22;
    ctx.font = font(chrome, 12, 600);
    ctx.fillStyle = chrome.inkMuted;
    ctx.fillText(fitText(ctx, model.scale.label, rect.width), rect.left, rect.top + 8);
    ctx.font = font(chrome, 12);
    let y = rect.top + 26;
    model.scale.categories.forEach((category, code) => {
      ctx.fillStyle = category.colour;
      ctx.fillRect(rect.left, y, 18, 18);
      ctx.strokeStyle = chrome.line;
      ctx.lineWidth = 1;
      ctx.strokeRect(rect.left + 0.5, y + 0.5, 17, 17);
      ctx.beginPath();
      traceGlyph(ctx, category.glyph, rect.left + 9, y + 9, 6);
      ctx.lineWidth = 1.5;
      ctx.lineCap = "round";
      paintGlyphPath(ctx, category.glyph, inkOn(category.colour));
      ctx.fillStyle = chrome.ink;
      ctx.fillText(category.label, rect.left + 26, y + 9);
      ctx.fillStyle = chrome.inkMuted;
      ctx.textAlign = "right";
      ctx.fillText((model.counts[code] ?? 0).toLocaleString("en-US"), rect.left + rect.width, y + 9);
      ctx.textAlign = "left";
      y += rowHeight;
    });
    if (model.pendingCount > 0) {
      if (hatch) ctx.fillStyle = hatch;
      ctx.fillRect(rect.left, y, 18, 18);
      ctx.strokeStyle = chrome.line;
      ctx.strokeRect(rect.left + 0.5, y + 0.5, 17, 17);
      ctx.fillStyle = chrome.inkMuted;
      ctx.fillText("Not computed", rect.left + 26, y + 9);
      ctx.textAlign = "right";
      ctx.fillText(model.pendingCount.toLocaleString("en-US"), rect.left + rect.width, y + 9);
    }
    ctx.restore();
    return;
  }
  const scale = model.scale;
  const barWidth = 14;
  const noteLines = scaleNote(scale, "outside" in model ? model.outside : undefined);
  const extrasHeight = (model.pendingCount > 0 ? 24 : 0) + (model.noValueCount > 0 ? 24 : 0) + noteLines.length * 15 + 4;
  const barTop = rect.top + 24;
  const barHeight = Math.max(40, rect.height - 24 - extrasHeight - 8);
  ctx.font = font(chrome, 12, 600);
  ctx.fillStyle = chrome.inkMuted;
  ctx.fillText(fitText(ctx, scale.label, rect.width), rect.left, rect.top + 8);
  // The bar from the LUT, low values at the bottom.
  const entries = scale.lut.length / 4;
  const step = barHeight / entries;
  for (let i = 0; i < entries; i++) {
    ctx.fillStyle = lutColourCss(scale.lut, i);
    ctx.fillRect(rect.left, barTop + barHeight - (i + 1) * step, barWidth, step + 0.6);
  }
  ctx.strokeStyle = chrome.inkMuted;
  ctx.lineWidth = 1;
  ctx.strokeRect(rect.left - 0.5, barTop - 0.5, barWidth + 1, barHeight + 1);
  ctx.font = font(chrome, 11);
  ctx.fillStyle = chrome.ink;
  const { normalisation } = scale;
  const toY = (v: number) => barTop + barHeight - normalise(normalisation, v) * barHeight;
  const drawn: number[] = [];
  for (const tick of legendTicks(normalisation)) {
    const y = toY(tick.value);
    if (y < barTop - 0.5 || y > barTop + barHeight + 0.5) continue;
    ctx.beginPath();
    ctx.moveTo(rect.left + barWidth, Math.round(y) + 0.5);
    ctx.lineTo(rect.left + barWidth + 4, Math.round(y) + 0.5);
    ctx.stroke();
    if (drawn.some((d) => Math.abs(d - y) < 13)) continue;
    drawn.push(y);
    ctx.fillText(formatSI(tick.value, scale.unit), rect.left + barWidth + 7, y);
  }
  let y = barTop + barHeight + 10;
  ctx.font = font(chrome, 11);
  ctx.fillStyle = chrome.inkMuted;
  for (const line of noteLines) {
    ctx.fillText(fitText(ctx, line, rect.width), rect.left, y + 5);
    y += 15;
  }
  y += 4;
  ctx.font = font(chrome, 12);
  if (model.noValueCount > 0) {
    ctx.fillStyle = "rgb(158 158 158)";
    ctx.fillRect(rect.left, y, barWidth, 14);
    ctx.fillStyle = chrome.inkMuted;
    ctx.fillText("No value", rect.left + barWidth + 7, y + 7);
    y += 24;
  }
  if (model.pendingCount > 0) {
    if (hatch) ctx.fillStyle = hatch;
    ctx.fillRect(rect.left, y, barWidth, 14);
    ctx.strokeStyle = chrome.line;
    ctx.strokeRect(rect.left + 0.5, y + 0.5, barWidth - 1, 13);
    ctx.fillStyle = chrome.inkMuted;
    ctx.fillText("Not computed", rect.left + barWidth + 7, y + 7);
  }
  ctx.restore();
}

/**
 * Draw the whole map on a canvas (resizing its backing store to CSS size × dpr) and return the
 * layout for hit-testing.
 */
export function renderMap(canvas: HTMLCanvasElement | OffscreenCanvas, model: MapModel, options: RenderOptions): MapLayout {
  const dpr = options.devicePixelRatio;
  const widthPx = Math.max(1, Math.round(options.widthCss * dpr));
  const heightPx = Math.max(1, Math.round(options.heightCss * dpr));
  if (canvas.width !== widthPx) canvas.width = widthPx;
  if (canvas.height !== heightPx) canvas.height = heightPx;
  const ctx = canvas.getContext("2d") as CanvasRenderingContext2D | null;
  if (!ctx) throw new Error("2D canvas context unavailable");
  ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
  ctx.clearRect(0, 0, options.widthCss, options.heightCss);
  ctx.fillStyle = options.chrome.surface;
  ctx.fillRect(0, 0, options.widthCss, options.heightCss);
  const layout = layoutMap(model, ctx, options);
  const { geometry } = layout;
  const { plot } = geometry;
  if (options.title) {
    ctx.font = font(options.chrome, 14, 600);
    ctx.fillStyle = options.chrome.ink;
    ctx.textAlign = "left";
    ctx.textBaseline = "top";
    ctx.fillText(options.title, 12, 6);
  }
  if (options.titleBlock?.length) {
    ctx.font = font(options.chrome, 12);
    ctx.fillStyle = options.chrome.inkMuted;
    ctx.textAlign = "left";
    ctx.textBaseline = "top";
    const top = options.title ? 28 : 6;
    options.titleBlock.forEach((line, i) => ctx.fillText(fitText(ctx, line, options.widthCss - 24), 12, top + i * TITLE_BLOCK_LINE_PX));
  }
  // Hatching first: cells not computed yet are transparent in the cell image and show it.
  if (model.pendingCount > 0) {
    const hatch = hatchPattern(ctx, options.chrome, dpr);
    if (hatch) {
      ctx.fillStyle = hatch;
      ctx.fillRect(plot.left, plot.top, plot.width, plot.height);
    }
  }
  drawCells(ctx, model, geometry, dpr);
  drawGlyphs(ctx, model, geometry, options.glyphs ?? "auto", dpr);
  drawAxes(ctx, model, geometry, options);
  drawOverlays(ctx, model, geometry, options.chrome, options.compact ?? false);
  const compact = options.compact ?? false;
  if ((options.showLegend ?? !compact) && !compact) {
    const left = plot.left + plot.width + 16;
    drawLegend(ctx, model, { left, top: plot.top, width: options.widthCss - left - 10, height: plot.height }, options.chrome, dpr);
  }
  return layout;
}

/** Outline the hovered / focused / selected cells on the transparent layer above the map. */
export function renderHighlights(
  canvas: HTMLCanvasElement,
  layout: MapLayout,
  dpr: number,
  cells: { index: number; style: "hover" | "focus" | "selected" }[],
  chrome: ChromeColours,
  columns: number,
): void {
  const widthPx = Math.max(1, Math.round(layout.widthCss * dpr));
  const heightPx = Math.max(1, Math.round(layout.heightCss * dpr));
  if (canvas.width !== widthPx) canvas.width = widthPx;
  if (canvas.height !== heightPx) canvas.height = heightPx;
  const ctx = canvas.getContext("2d");
  if (!ctx) return;
  ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
  ctx.clearRect(0, 0, layout.widthCss, layout.heightCss);
  for (const { index, style } of cells) {
    const r = cellRect(layout.geometry, index % columns, Math.floor(index / columns));
    const inset = style === "selected" ? -1.5 : -1;
    ctx.lineWidth = 3.5;
    ctx.strokeStyle = "rgba(255,255,255,0.9)";
    ctx.setLineDash([]);
    ctx.strokeRect(r.left + inset, r.top + inset, r.width - 2 * inset, r.height - 2 * inset);
    ctx.lineWidth = 1.75;
    ctx.strokeStyle = style === "focus" ? chrome.focus : "#111111";
    ctx.setLineDash(style === "selected" ? [4, 2] : []);
    ctx.strokeRect(r.left + inset, r.top + inset, r.width - 2 * inset, r.height - 2 * inset);
  }
  ctx.setLineDash([]);
}
