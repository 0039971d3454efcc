/**
 * Mapping metric values to [0, 1] for a colour scale: linear, log (decades equally spaced),
 * symmetric (zero in the middle, ±max at the ends, for signed metrics and difference maps) or
 * symmetric-log (zero in the middle, each decade of |value| above a constant C equally spaced on
 * either side: the bi-symmetric log transform sign(v)·log10(1 + |v|/C) of J. B. W. Webber, "A
 * bi-symmetric log transformation for wide-range data", Meas. Sci. Technol. 24 (2013) 027001,
 * eq. 1), for signed metrics that span many decades such as energy errors.
 *
 * A domain can be clipped to percentiles of the values so one blown-up cell does not squeeze
 * every other cell into one end of the scale; the values beyond are drawn in the end colours and
 * counted, and the legend says so.
 */
import { logTicks, niceLinearTicks, type Tick } from "./ticks";

export type NormalisationKind = "linear" | "log" | "symmetric" | "symlog";

export interface Normalisation {
  kind: NormalisationKind;
  /** [low, high]; low < high, both > 0 for "log", low = −high for "symmetric" and "symlog". */
  domain: readonly [number, number];
  /** "symlog" only: C, the |value| below which the scale is close to linear (default domain high × 10⁻⁶). */
  constant?: number;
}

/** Webber's bi-symmetric log of v with constant C (eq. 1 of the paper named above). */
export function symlog(v: number, constant: number): number {
  return Math.sign(v) * Math.log10(1 + Math.abs(v) / constant);
}

/** Inverse of symlog. */
export function symexp(u: number, constant: number): number {
  return Math.sign(u) * constant * (10 ** Math.abs(u) - 1);
}

/** The constant C of a symlog normalisation (its own, or the domain high × 10⁻⁶). */
export function symlogConstant(n: Normalisation): number {
  return n.constant && n.constant > 0 ? n.constant : Math.abs(n.domain[1]) * 1e-6 || 1e-12;
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
  } else if (n.kind === "symlog") {
    const c = symlogConstant(n);
    const top = symlog(hi, c);
    t = (symlog(value, c) + top) / (2 * top);
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
  if (n.kind === "symlog") {
    const c = symlogConstant(n);
    return symexp((2 * t - 1) * symlog(hi, c), c);
  }
  return lo + t * (hi - lo);
}

/**
 * The p-th percentile (0 ≤ p ≤ 100) of values sorted ascending, interpolating linearly between
 * the closest ranks: the sample quantile of type 7 in R. J. Hyndman and Y. Fan, "Sample quantiles
 * in statistical packages", The American Statistician 50 (1996) 361–365 (R's and NumPy's default).
 */
export function percentileSorted(sorted: ArrayLike<number>, p: number): number {
  const n = sorted.length;
  if (n === 0) return Number.NaN;
  const h = (n - 1) * Math.min(1, Math.max(0, p / 100));
  const below = Math.floor(h);
  const above = Math.min(n - 1, below + 1);
  return sorted[below] + (h - below) * (sorted[above] - sorted[below]);
}

/** Percentiles that clip a colour scale: values below `low` / above `high` take the end colours. */
export interface PercentileClip {
  low: number;
  high: number;
}

/** Why a clip cannot be used, or null. */
export function clipProblem(clip: PercentileClip): string | null {
  if (!Number.isFinite(clip.low) || !Number.isFinite(clip.high)) return "percentiles must be finite numbers";
  if (clip.low < 0 || clip.high > 100) return `percentiles run from 0 to 100, got ${clip.low} and ${clip.high}`;
  if (!(clip.low < clip.high)) return `the low percentile (${clip.low}) must be below the high one (${clip.high})`;
  return null;
}

/**
 * A domain clipped to percentiles of the usable values: [p_low, p_high] for linear and log scales,
 * ±(p_high of |value|) for symmetric ones (zero stays in the middle). Falls back to autoDomain
 * when the clipped range collapses (e.g. most values equal).
 */
export function clippedDomain(values: ArrayLike<number | null>, kind: NormalisationKind, clip: PercentileClip): [number, number] {
  const usable: number[] = [];
  const centred = kind === "symmetric" || kind === "symlog";
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (v === null || !Number.isFinite(v)) continue;
    if (kind === "log" && v <= 0) continue;
    usable.push(centred ? Math.abs(v) : v);
  }
  usable.sort((a, b) => a - b);
  if (centred) {
    const top = percentileSorted(usable, clip.high);
    return top > 0 ? [-top, top] : autoDomain(values, kind);
  }
  const lo = percentileSorted(usable, clip.low);
  const hi = percentileSorted(usable, clip.high);
  return lo < hi ? [lo, hi] : autoDomain(values, kind);
}

/** How many usable values fall below and above a domain (drawn in the end colours). */
export function countOutside(values: ArrayLike<number | null>, domain: readonly [number, number]): { below: number; above: number } {
  let below = 0;
  let above = 0;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (v === null || Number.isNaN(v)) continue;
    if (v < domain[0]) below++;
    else if (v > domain[1]) above++;
  }
  return { below, above };
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
  if (kind === "symmetric" || kind === "symlog") {
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
  if ((kind === "symmetric" || kind === "symlog") && Math.abs(lo + hi) > 1e-12 * Math.max(Math.abs(lo), Math.abs(hi))) {
    return `a symmetric scale needs low = −high, got [${lo}, ${hi}]`;
  }
  return null;
}

/** Ticks for the legend bar of a normalisation. */
export function legendTicks(n: Normalisation, target = 5): Tick[] {
  if (n.kind === "log") return logTicks(n.domain[0], n.domain[1]);
  if (n.kind === "symlog") return symlogTicks(n);
  return niceLinearTicks(n.domain[0], n.domain[1], target);
}

/**
 * Legend ticks of a symlog scale: 0, and ± powers of ten from the first above C up to the domain
 * end (every other decade when there are many), plus the clipped ends themselves.
 */
export function symlogTicks(n: Normalisation): Tick[] {
  const hi = n.domain[1];
  const c = symlogConstant(n);
  const first = Math.ceil(Math.log10(c));
  const last = Math.floor(Math.log10(hi));
  const decades: number[] = [];
  for (let k = first; k <= last; k++) decades.push(10 ** k);
  const stride = Math.max(1, Math.ceil(decades.length / 4));
  const kept = decades.filter((_, i) => (decades.length - 1 - i) % stride === 0);
  const positive = kept.filter((v) => v < hi * 0.7);
  const values = [-hi, ...positive.slice().reverse().map((v) => -v), 0, ...positive, hi];
  return values.map((value) => ({ value: Number(value.toPrecision(12)), major: true }));
}
