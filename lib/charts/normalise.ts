/**
 * Mapping metric values to [0, 1] for a colour scale: linear, log (decades equally spaced) or
 * symmetric (zero in the middle, ±max at the ends, for signed metrics and difference maps).
 */
import { logTicks, niceLinearTicks, type Tick } from "./ticks";

export type NormalisationKind = "linear" | "log" | "symmetric";

export interface Normalisation {
  kind: NormalisationKind;
  /** [low, high]; low < high, both > 0 for "log", low = −high for "symmetric". */
  domain: readonly [number, number];
}

/**
 * t ∈ [0, 1] for a value. NaN stays NaN (not computed); ±∞ and out-of-domain values clamp to
 * the ends; on a log scale values ≤ 0 clamp to the low end (the tooltip shows the true value).
 */
export function normalise(n: Normalisation, value: number): number {
  if (Number.isNaN(value)) return Number.NaN;
  const [lo, hi] = n.domain;
  let t: number;
  if (n.kind === "log") {
    if (!(value > 0)) return 0;
    t = (Math.log10(value) - Math.log10(lo)) / (Math.log10(hi) - Math.log10(lo));
  } else {
    t = (value - lo) / (hi - lo);
  }
  if (Number.isNaN(t)) return value > 0 ? 1 : 0;
  return Math.min(1, Math.max(0, t));
}

/** Inverse of normalise inside the domain (legend tick placement). */
export function denormalise(n: Normalisation, t: number): number {
  const [lo, hi] = n.domain;
  if (n.kind === "log") return 10 ** (Math.log10(lo) + t * (Math.log10(hi) - Math.log10(lo)));
  return lo + t * (hi - lo);
}

/**
 * A domain covering the finite values (NaN and ±∞ ignored; ≤ 0 ignored on a log scale).
 * A single distinct value is widened so the scale never divides by zero; no usable value at all
 * gives [0, 1] (linear), [1, 10] (log) or [−1, 1] (symmetric).
 */
export function autoDomain(values: ArrayLike<number | null>, kind: NormalisationKind): [number, number] {
  let lo = Number.POSITIVE_INFINITY;
  let hi = Number.NEGATIVE_INFINITY;
  let maxAbs = 0;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (v === null || !Number.isFinite(v)) continue;
    if (kind === "log" && v <= 0) continue;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
    if (Math.abs(v) > maxAbs) maxAbs = Math.abs(v);
  }
  if (kind === "symmetric") {
    return maxAbs > 0 ? [-maxAbs, maxAbs] : [-1, 1];
  }
  if (lo > hi) return kind === "log" ? [1, 10] : [0, 1];
  if (lo === hi) {
    if (kind === "log") return [lo / Math.sqrt(10), lo * Math.sqrt(10)];
    const half = lo === 0 ? 0.5 : Math.abs(lo) / 2;
    return [lo - half, hi + half];
  }
  return [lo, hi];
}

/** Why a domain cannot be used with a normalisation, or null. */
export function domainProblem(kind: NormalisationKind, domain: readonly [number, number]): string | null {
  const [lo, hi] = domain;
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return `domain must be finite, got [${lo}, ${hi}]`;
  if (!(lo < hi)) return `domain low (${lo}) must be below high (${hi})`;
  if (kind === "log" && lo <= 0) return `a log scale needs a domain above 0, got low ${lo}`;
  if (kind === "symmetric" && Math.abs(lo + hi) > 1e-12 * Math.max(Math.abs(lo), Math.abs(hi))) {
    return `a symmetric scale needs low = −high, got [${lo}, ${hi}]`;
  }
  return null;
}

/** Index into a LUT of `lutSize` entries for a normalised t (NaN → −1). */
export function lutIndex(t: number, lutSize: number): number {
  if (Number.isNaN(t)) return -1;
  return Math.round(t * (lutSize - 1));
}

/** Ticks for the legend bar of a normalisation. */
export function legendTicks(n: Normalisation, target = 5): Tick[] {
  if (n.kind === "log") return logTicks(n.domain[0], n.domain[1]);
  return niceLinearTicks(n.domain[0], n.domain[1], target);
}
