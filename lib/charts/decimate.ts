/**
 * Thinning long time series for drawing: keep, in each bucket of consecutive samples, the samples
 * where any series reaches its minimum or maximum, so a one-sample spike (an energy blow-up, the
 * deepest overlap) survives; always keep the first and last sample.
 */

/** Sorted sample indices to draw, at most `maxPoints` of them (maxPoints ≥ 2). */
export function pickSampleIndices(length: number, series: readonly ArrayLike<number>[], maxPoints: number): number[] {
  if (!Number.isInteger(maxPoints) || maxPoints < 2) throw new Error(`maxPoints must be an integer ≥ 2, got ${maxPoints}`);
  if (length <= maxPoints) return Array.from({ length }, (_, i) => i);
  const perBucket = Math.max(1, 2 * series.length);
  const bucketCount = Math.max(1, Math.floor((maxPoints - 2) / perBucket));
  const keep = new Set<number>([0, length - 1]);
  for (let b = 0; b < bucketCount; b++) {
    const start = Math.floor((b * length) / bucketCount);
    const end = Math.floor(((b + 1) * length) / bucketCount);
    if (series.length === 0) {
      keep.add(start);
      continue;
    }
    for (const values of series) {
      let minAt = -1;
      let maxAt = -1;
      for (let i = start; i < end; i++) {
        const v = values[i];
        if (!Number.isFinite(v)) continue;
        if (minAt < 0 || v < values[minAt]) minAt = i;
        if (maxAt < 0 || v > values[maxAt]) maxAt = i;
      }
      if (minAt >= 0) keep.add(minAt);
      if (maxAt >= 0) keep.add(maxAt);
    }
  }
  return [...keep].sort((a, b) => a - b);
}

/**
 * The samples around the contacts: from the first to the last sample with any overlap, widened on
 * each side by `padFraction` of its own length (at least `minPad` samples), inside [0, length − 1].
 * Null when nothing ever overlaps (the whole run is the window then).
 */
export function contactWindow(overlap: ArrayLike<number>, padFraction = 0.5, minPad = 3): [number, number] | null {
  let first = -1;
  let last = -1;
  for (let i = 0; i < overlap.length; i++) {
    if (overlap[i] > 0) {
      if (first < 0) first = i;
      last = i;
    }
  }
  if (first < 0) return null;
  const pad = Math.max(minPad, Math.ceil((last - first + 1) * padFraction));
  return [Math.max(0, first - pad), Math.min(overlap.length - 1, last + pad)];
}

/** Sample indices to draw inside [from, to] (inclusive), at most maxPoints, keeping each bucket's extremes. */
export function pickSampleIndicesIn(from: number, to: number, series: readonly ArrayLike<number>[], maxPoints: number): number[] {
  const length = to - from + 1;
  if (length <= 0) return [];
  const views = series.map((values) => Array.prototype.slice.call(values, from, to + 1) as number[]);
  return pickSampleIndices(length, views, maxPoints).map((i) => i + from);
}
