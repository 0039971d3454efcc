/**
 * The verdict glyphs as geometry: one drawing routine feeds the canvas map, its SVG export, the
 * dense-map patterns and the HTML symbols of the pair matrix and legends, so a glyph looks the
 * same everywhere it appears.
 */
import type { GlyphName } from "./categories";

/** The part of a 2D path API a glyph needs (CanvasRenderingContext2D and Path2D satisfy it). */
export interface PathSink {
  moveTo(x: number, y: number): void;
  lineTo(x: number, y: number): void;
  arc(x: number, y: number, radius: number, startAngle: number, endAngle: number): void;
}

/** Add one glyph's path centred at (cx, cy) with half-size s. */
export function traceGlyph(ctx: PathSink, glyph: GlyphName, cx: number, cy: number, s: number): void {
  switch (glyph) {
    case "dot":
      ctx.moveTo(cx + s * 0.28, cy);
      ctx.arc(cx, cy, s * 0.28, 0, Math.PI * 2);
      break;
    case "ring":
      ctx.moveTo(cx + s * 0.62, cy);
      ctx.arc(cx, cy, s * 0.62, 0, Math.PI * 2);
      break;
    case "slash":
      ctx.moveTo(cx - s * 0.6, cy + s * 0.6);
      ctx.lineTo(cx + s * 0.6, cy - s * 0.6);
      break;
    case "backslash":
      ctx.moveTo(cx - s * 0.6, cy - s * 0.6);
      ctx.lineTo(cx + s * 0.6, cy + s * 0.6);
      break;
    case "chevron":
      ctx.moveTo(cx - s * 0.35, cy - s * 0.6);
      ctx.lineTo(cx + s * 0.35, cy);
      ctx.lineTo(cx - s * 0.35, cy + s * 0.6);
      break;
    case "cross":
      ctx.moveTo(cx - s * 0.55, cy - s * 0.55);
      ctx.lineTo(cx + s * 0.55, cy + s * 0.55);
      ctx.moveTo(cx + s * 0.55, cy - s * 0.55);
      ctx.lineTo(cx - s * 0.55, cy + s * 0.55);
      break;
    case "bar":
      ctx.moveTo(cx - s * 0.6, cy);
      ctx.lineTo(cx + s * 0.6, cy);
      break;
    case "zigzag":
      ctx.moveTo(cx - s * 0.6, cy + s * 0.3);
      ctx.lineTo(cx - s * 0.2, cy - s * 0.3);
      ctx.lineTo(cx + s * 0.2, cy + s * 0.3);
      ctx.lineTo(cx + s * 0.6, cy - s * 0.3);
      break;
    case "ticks":
      ctx.moveTo(cx - s * 0.5, cy - s * 0.35);
      ctx.lineTo(cx - s * 0.5, cy + s * 0.35);
      ctx.moveTo(cx, cy - s * 0.35);
      ctx.lineTo(cx, cy + s * 0.35);
      ctx.moveTo(cx + s * 0.5, cy - s * 0.35);
      ctx.lineTo(cx + s * 0.5, cy + s * 0.35);
      break;
    case "arrow":
      ctx.moveTo(cx - s * 0.6, cy - s * 0.3);
      ctx.lineTo(cx + s * 0.6, cy + s * 0.3);
      ctx.moveTo(cx + s * 0.15, cy + s * 0.4);
      ctx.lineTo(cx + s * 0.6, cy + s * 0.3);
      ctx.lineTo(cx + s * 0.35, cy - s * 0.1);
      break;
    case "cup":
      // A U of straight strokes (a body sunk into its support), so the SVG export needs no partial arcs.
      ctx.moveTo(cx - s * 0.55, cy - s * 0.45);
      ctx.lineTo(cx - s * 0.35, cy + s * 0.45);
      ctx.lineTo(cx + s * 0.35, cy + s * 0.45);
      ctx.lineTo(cx + s * 0.55, cy - s * 0.45);
      break;
    case "none":
      break;
  }
}

/** Filled glyphs (the dot); the others are stroked. */
export function glyphIsFilled(glyph: GlyphName): boolean {
  return glyph === "dot";
}

function n(value: number): string {
  return String(Number(value.toFixed(2)));
}

/** Records a PathSink's calls as SVG path data (full-circle arcs as two half arcs). */
export class SvgPathRecorder implements PathSink {
  private parts: string[] = [];
  moveTo(x: number, y: number): void {
    this.parts.push(`M${n(x)} ${n(y)}`);
  }
  lineTo(x: number, y: number): void {
    this.parts.push(`L${n(x)} ${n(y)}`);
  }
  arc(x: number, y: number, radius: number, startAngle: number, endAngle: number): void {
    // Glyphs only draw whole circles starting at angle 0 (the pen is already at (x + r, y)).
    if (Math.abs(endAngle - startAngle) >= Math.PI * 2 - 1e-9) {
      this.parts.push(`A${n(radius)} ${n(radius)} 0 1 1 ${n(x - radius)} ${n(y)}`, `A${n(radius)} ${n(radius)} 0 1 1 ${n(x + radius)} ${n(y)}`);
      return;
    }
    const ex = x + radius * Math.cos(endAngle);
    const ey = y + radius * Math.sin(endAngle);
    const large = Math.abs(endAngle - startAngle) > Math.PI ? 1 : 0;
    this.parts.push(`A${n(radius)} ${n(radius)} 0 ${large} 1 ${n(ex)} ${n(ey)}`);
  }
  toString(): string {
    return this.parts.join("");
  }
}

/** SVG path data of one glyph centred at (cx, cy), half-size s. */
export function glyphSvgPath(glyph: GlyphName, cx: number, cy: number, s: number): string {
  const recorder = new SvgPathRecorder();
  traceGlyph(recorder, glyph, cx, cy, s);
  return recorder.toString();
}
