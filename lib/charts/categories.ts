/**
 * Categorical map styles: the verdict palette and glyphs, and the comparison categories of a
 * verdict difference map (A vs B).
 *
 * The palette is Kickdrift's own. Lightness falls monotonically with severity (CIE L* 91, 81, 71,
 * 61, 51, 42, 33, 25 for stable → exploded; neighbours differ by a luminance ratio above 1.3), so the map reads in greyscale and for every kind of colour
 * vision; hue adds a second cue, and each category has its own glyph for when colour is not
 * available at all. Colours were chosen in CIE LCh and converted to sRGB with lib/charts/color.ts.
 */
import type { Verdict } from "../physics/types";

export type GlyphName = "dot" | "slash" | "backslash" | "ring" | "chevron" | "cross" | "bar" | "zigzag" | "none" | "ticks" | "arrow" | "cup";

export interface CategoryStyle {
  /** Stable key (verdict name, comparison name). */
  key: string;
  label: string;
  /** #rrggbb fill. */
  colour: string;
  glyph: GlyphName;
}

/** Verdicts from least to most severe (the reverse of the engine's precedence list). */
export const VERDICTS_BY_SEVERITY: readonly Verdict[] = ["stable", "creep", "coarse-contact", "jitter", "energy-drift", "restitution-off", "sinking", "deep-overlap", "tunneled", "step-unstable", "exploded"];

export const VERDICT_STYLES: Record<Verdict, CategoryStyle> = {
  stable: { key: "stable", label: "Stable", colour: "#b9f1dd", glyph: "dot" },
  "coarse-contact": { key: "coarse-contact", label: "Coarse contact", colour: "#c5d079", glyph: "bar" },
  "energy-drift": { key: "energy-drift", label: "Energy drift", colour: "#d4a83a", glyph: "slash" },
  "restitution-off": { key: "restitution-off", label: "Restitution off", colour: "#dd793c", glyph: "backslash" },
  "deep-overlap": { key: "deep-overlap", label: "Deep overlap", colour: "#ce5042", glyph: "ring" },
  tunneled: { key: "tunneled", label: "Tunneled", colour: "#585ca7", glyph: "chevron" },
  "step-unstable": { key: "step-unstable", label: "Step unstable", colour: "#892463", glyph: "zigzag" },
  exploded: { key: "exploded", label: "Exploded", colour: "#701a2e", glyph: "cross" },
  // Resting-contact verdicts, placed by lightness between their neighbours in severity (L* 85.5, 75.6, 54.5).
  creep: { key: "creep", label: "Creep", colour: "#bcd9f5", glyph: "arrow" },
  jitter: { key: "jitter", label: "Jitter", colour: "#a9b9ec", glyph: "ticks" },
  sinking: { key: "sinking", label: "Sinking", colour: "#b46a9e", glyph: "cup" },
};

/** The verdict categories in severity order, as the map's category list (code i ↔ entry i). */
export const VERDICT_CATEGORIES: readonly CategoryStyle[] = VERDICTS_BY_SEVERITY.map((v) => VERDICT_STYLES[v]);

/** Category code of a verdict in VERDICT_CATEGORIES. */
export function verdictCode(verdict: Verdict): number {
  const code = VERDICTS_BY_SEVERITY.indexOf(verdict);
  if (code < 0) throw new Error(`unknown verdict ${JSON.stringify(verdict)}`);
  return code;
}

/** Code for a cell that has no category yet (not computed). */
export const PENDING_CODE = 255;

/** Verdicts (null = not computed yet) → category codes. */
export function verdictCodes(verdicts: readonly (Verdict | null | undefined)[]): Uint8Array {
  const codes = new Uint8Array(verdicts.length);
  for (let i = 0; i < verdicts.length; i++) {
    const v = verdicts[i];
    codes[i] = v ? verdictCode(v) : PENDING_CODE;
  }
  return codes;
}

export type ComparisonCategory = "both-pass" | "only-a-fails" | "only-b-fails" | "both-fail";

export const COMPARISON_CATEGORIES: readonly ComparisonCategory[] = ["both-pass", "only-a-fails", "only-b-fails", "both-fail"];

/** Styles of the comparison map; lightness falls from "both pass" to "both fail" (L* 93, 72, 52, 27). */
export function comparisonStyles(labelA: string, labelB: string): CategoryStyle[] {
  return [
    { key: "both-pass", label: "Same: both stable", colour: "#eeebe3", glyph: "none" },
    { key: "only-a-fails", label: `Only ${labelA} fails`, colour: "#e1a463", glyph: "backslash" },
    { key: "only-b-fails", label: `Only ${labelB} fails`, colour: "#2883b5", glyph: "slash" },
    { key: "both-fail", label: "Both fail", colour: "#5c3057", glyph: "cross" },
  ];
}

/** A cell fails when its verdict is anything but stable. */
export function compareVerdicts(a: Verdict, b: Verdict): ComparisonCategory {
  const aFails = a !== "stable";
  const bFails = b !== "stable";
  if (aFails && bFails) return "both-fail";
  if (aFails) return "only-a-fails";
  if (bFails) return "only-b-fails";
  return "both-pass";
}

/** Cell-wise comparison codes (index into COMPARISON_CATEGORIES); pending when either side is. */
export function comparisonCodes(a: readonly (Verdict | null | undefined)[], b: readonly (Verdict | null | undefined)[]): Uint8Array {
  if (a.length !== b.length) throw new Error(`maps A and B must have the same number of cells (A has ${a.length}, B has ${b.length})`);
  const codes = new Uint8Array(a.length);
  for (let i = 0; i < a.length; i++) {
    const va = a[i];
    const vb = b[i];
    codes[i] = va && vb ? COMPARISON_CATEGORIES.indexOf(compareVerdicts(va, vb)) : PENDING_CODE;
  }
  return codes;
}

/**
 * B − A per cell; NaN where either is NaN (not computed), null where either has no value.
 */
export function differenceValues(
  a: ArrayLike<number | null>,
  b: ArrayLike<number | null>,
): (number | null)[] {
  if (a.length !== b.length) throw new Error(`maps A and B must have the same number of cells (A has ${a.length}, B has ${b.length})`);
  const out: (number | null)[] = new Array(a.length);
  for (let i = 0; i < a.length; i++) {
    const va = a[i];
    const vb = b[i];
    if (va === null || vb === null) out[i] = Number.isNaN(va as number) || Number.isNaN(vb as number) ? Number.NaN : null;
    else out[i] = vb - va;
  }
  return out;
}

/** Number of cells per category code (pending cells are not counted). */
export function countCodes(codes: ArrayLike<number>, categoryCount: number): number[] {
  const counts = new Array<number>(categoryCount).fill(0);
  for (let i = 0; i < codes.length; i++) {
    const c = codes[i];
    if (c < categoryCount) counts[c]++;
  }
  return counts;
}
