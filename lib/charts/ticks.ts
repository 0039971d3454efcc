/**
 * Tick positions for axes and legends: "nice" 1-2-5 steps on linear axes, decades (with 2 and 5
 * between them when the range spans few decades) on log axes.
 */

export interface Tick {
  value: number;
  /** Decades on a log axis, every tick on a linear axis; minor ticks get no label when space is short. */
  major: boolean;
}

/** The 1, 2 or 5 × 10^k step nearest above `rough`. */
export function niceStep(rough: number): number {
  if (!(rough > 0) || !Number.isFinite(rough)) throw new Error(`tick step must be a positive finite number, got ${rough}`);
  const power = 10 ** Math.floor(Math.log10(rough));
  const fraction = rough / power;
  const nice = fraction <= 1 ? 1 : fraction <= 2 ? 2 : fraction <= 5 ? 5 : 10;
  return nice * power;
}

/** Remove binary noise from a multiple of a step (0.1 × 3 → 0.3). */
function cleanMultiple(multiple: number, step: number): number {
  return Number((multiple * step).toPrecision(12));
}

/**
 * Ticks at multiples of a nice step inside [min, max] (inclusive), about `target` of them.
 * min == max gives that one value.
 */
export function niceLinearTicks(min: number, max: number, target = 5): Tick[] {
  if (!Number.isFinite(min) || !Number.isFinite(max)) throw new Error(`tick range must be finite, got [${min}, ${max}]`);
  if (min > max) [min, max] = [max, min];
  if (min === max) return [{ value: min, major: true }];
  const step = niceStep((max - min) / Math.max(1, target));
  const first = Math.ceil(min / step - 1e-9);
  const last = Math.floor(max / step + 1e-9);
  const ticks: Tick[] = [];
  for (let k = first; k <= last; k++) ticks.push({ value: cleanMultiple(k, step), major: true });
  return ticks;
}

/**
 * Ticks for a log axis over [min, max] (both > 0). Decades are major ticks; with fewer than three
 * decades in range, 2 and 5 times each decade are added as minor ticks (1-2-5); with more decades
 * than `maxMajor`, every k-th decade is kept. Ranges narrower than a 1-2-5 step fall back to
 * linear ticks.
 */
export function logTicks(min: number, max: number, maxMajor = 8): Tick[] {
  if (!(min > 0) || !(max > 0) || !Number.isFinite(min) || !Number.isFinite(max)) {
    throw new Error(`log ticks need a positive finite range, got [${min}, ${max}]`);
  }
  if (min > max) [min, max] = [max, min];
  const tolerance = 1e-9;
  const firstDecade = Math.ceil(Math.log10(min) - tolerance);
  const lastDecade = Math.floor(Math.log10(max) + tolerance);
  const decadeCount = lastDecade - firstDecade + 1;
  const inRange = (v: number) => v >= min * (1 - tolerance) && v <= max * (1 + tolerance);
  if (decadeCount >= 3) {
    const every = Math.max(1, Math.ceil(decadeCount / maxMajor));
    const ticks: Tick[] = [];
    for (let d = firstDecade; d <= lastDecade; d++) {
      if ((d - firstDecade) % every === 0) ticks.push({ value: Number((10 ** d).toPrecision(12)), major: true });
    }
    return ticks;
  }
  const ticks: Tick[] = [];
  for (let d = Math.floor(Math.log10(min)) ; d <= Math.ceil(Math.log10(max)); d++) {
    for (const m of [1, 2, 5]) {
      const value = Number((m * 10 ** d).toPrecision(12));
      if (inRange(value)) ticks.push({ value, major: m === 1 });
    }
  }
  if (ticks.length >= 2) return ticks;
  return niceLinearTicks(min, max, 4).filter((t) => t.value > 0);
}

/** Unlabelled minor marks of a log axis: 2 … 9 times each decade inside [min, max]. */
export function logMinorTicks(min: number, max: number): number[] {
  if (!(min > 0) || !(max > 0) || !Number.isFinite(min) || !Number.isFinite(max)) {
    throw new Error(`log ticks need a positive finite range, got [${min}, ${max}]`);
  }
  if (min > max) [min, max] = [max, min];
  const marks: number[] = [];
  for (let d = Math.floor(Math.log10(min)); d <= Math.ceil(Math.log10(max)); d++) {
    for (let m = 2; m <= 9; m++) {
      const value = Number((m * 10 ** d).toPrecision(12));
      if (value >= min * (1 - 1e-9) && value <= max * (1 + 1e-9)) marks.push(value);
    }
  }
  return marks;
}
