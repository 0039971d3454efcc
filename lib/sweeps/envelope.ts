/**
 * The safe envelope of a stability map: for each value of axis x, the furthest value of axis y
 * reached from the start of y (bound "max": from the first y upward; "min": from the last y
 * downward) through stable cells only, pulled back by a margin.
 *
 * Margin rule (documented in docs/api.md): the walk along y stops at the first cell that is not
 * stable. The reference is that first unstable y, or the last y of the walk when every cell is
 * stable. With bound "max" the limit is the largest y of the walk with y ≤ (1 − margin) ×
 * reference; with "min" the smallest y of the walk with y ≥ reference / (1 − margin). With margin 0
 * and y values rising along the axis, the limit is the last stable y. When no y of the walk qualifies (or the first cell is not
 * stable), the limit is null. Margins apply to positive y values (y axes with a value ≤ 0 accept
 * only margin 0).
 *
 * Other axes stay at the positions given (`at`, default position 0).
 *
 * Pure: safe to import in the browser.
 */
import type { Verdict } from "../physics/types";
import { cellIndex, type ExpandedAxis } from "./grid";

export type EnvelopeBound = "max" | "min";

export interface EnvelopeInput {
  axes: readonly ExpandedAxis[];
  /** Verdict of a cell by index; undefined while the cell is not done (treated as not stable). */
  verdictAt: (index: number) => Verdict | undefined;
  x: number;
  y: number;
  margin: number;
  bound: EnvelopeBound;
  /** Positions of the other axes (one per axis; entries for x and y are ignored). */
  at?: readonly number[];
}

export interface EnvelopeRow {
  x: number | string;
  yLimit: number | null;
}

export interface Envelope {
  xPath: string;
  yPath: string;
  margin: number;
  bound: EnvelopeBound;
  rows: EnvelopeRow[];
}

/** Why an envelope request cannot be answered: the field and the message. */
export class EnvelopeInputError extends Error {
  constructor(
    readonly field: string,
    message: string,
  ) {
    super(message);
    this.name = "EnvelopeInputError";
  }
}

export const MAX_ENVELOPE_MARGIN = 0.9;

export function validateEnvelopeInput(input: Omit<EnvelopeInput, "verdictAt">): void {
  const { axes, x, y, margin, bound, at } = input;
  const axisRange = axes.length ? `0..${axes.length - 1}` : "none (the sweep has no axes)";
  if (axes.length < 2) throw new EnvelopeInputError("x", `an envelope needs two axes; the sweep has ${axes.length}`);
  if (!Number.isInteger(x) || x < 0 || x >= axes.length) throw new EnvelopeInputError("x", `x must be an axis index in ${axisRange}; got ${x}`);
  if (!Number.isInteger(y) || y < 0 || y >= axes.length) throw new EnvelopeInputError("y", `y must be an axis index in ${axisRange}; got ${y}`);
  if (x === y) throw new EnvelopeInputError("y", "y must be a different axis from x");
  if (!(margin >= 0 && margin <= MAX_ENVELOPE_MARGIN)) throw new EnvelopeInputError("margin", `margin must be a number from 0 to ${MAX_ENVELOPE_MARGIN}; got ${margin}`);
  if (bound !== "max" && bound !== "min") throw new EnvelopeInputError("bound", `bound must be max or min; got ${String(bound)}`);
  const yValues = axes[y].values;
  if (yValues.some((v) => typeof v !== "number")) throw new EnvelopeInputError("y", `y must be a numeric axis; ${axes[y].parameter} lists choices`);
  if (margin > 0 && (yValues as number[]).some((v) => v <= 0)) throw new EnvelopeInputError("margin", `margin must be 0 for ${axes[y].parameter}: it has values ≤ 0`);
  if (at) {
    if (at.length !== axes.length) throw new EnvelopeInputError("at", `at must give one position per axis (${axes.length}); got ${at.length}`);
    at.forEach((position, i) => {
      if (i === x || i === y) return;
      if (!Number.isInteger(position) || position < 0 || position >= axes[i].values.length)
        throw new EnvelopeInputError("at", `at.${i} must be a position in 0..${axes[i].values.length - 1}; got ${position}`);
    });
  }
}

export function computeEnvelope(input: EnvelopeInput): Envelope {
  validateEnvelopeInput(input);
  const { axes, x, y, margin, bound, verdictAt } = input;
  const positions = axes.map((_, i) => input.at?.[i] ?? 0);
  const yValues = axes[y].values as number[];
  const n = yValues.length;
  const rows: EnvelopeRow[] = axes[x].values.map((xValue, ix) => {
    positions[x] = ix;
    const walked: number[] = [];
    let reference: number | null = null;
    for (let step = 0; step < n; step++) {
      positions[y] = bound === "max" ? step : n - 1 - step;
      const value = yValues[positions[y]];
      if (verdictAt(cellIndex(axes, positions)) !== "stable") {
        reference = value;
        break;
      }
      walked.push(value);
    }
    if (walked.length === 0) return { x: xValue, yLimit: null };
    reference ??= walked[walked.length - 1];
    let limit: number | null = null;
    for (const value of walked) {
      if (bound === "max" ? value <= (1 - margin) * reference : value >= reference / (1 - margin)) {
        if (limit === null || (bound === "max" ? value > limit : value < limit)) limit = value;
      }
    }
    return { x: xValue, yLimit: limit };
  });
  return { xPath: axes[x].parameter, yPath: axes[y].parameter, margin, bound, rows };
}
