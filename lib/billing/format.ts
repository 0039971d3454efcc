/** Integer milliseconds of compute shown as minutes with two decimals, e.g. 90_500 → "1.51" (rounded half up). */
export function formatMinutes(ms: number): string {
  const hundredths = Math.round((ms / 60_000) * 100);
  const sign = hundredths < 0 ? "-" : "";
  const abs = Math.abs(hundredths);
  return `${sign}${Math.floor(abs / 100).toLocaleString("en-US")}.${String(abs % 100).padStart(2, "0")}`;
}

/**
 * Compute for a person to read: minutes when there are at least a few seconds' worth, else
 * seconds or milliseconds, so a sweep that costs something never reads "0.00 min".
 * 90_500 → "1.51 min", 12_345 → "12.3 s", 640 → "640 ms".
 */
export function formatCompute(ms: number): string {
  const abs = Math.abs(ms);
  if (abs >= 60_000) return `${formatMinutes(ms)} min`;
  if (abs >= 1_000) return `${(ms / 1_000).toFixed(1)} s`;
  return `${ms.toLocaleString("en-US")} ms`;
}

/**
 * Cents for `ms` of compute at a price of `tenthsOfCentPerMinute` (integers, so exact), rounded up
 * to a whole cent: never 0 for a cost above 0.
 */
export function centsForMs(ms: number, tenthsOfCentPerMinute: number): number {
  return ms <= 0 ? 0 : Math.ceil((ms * tenthsOfCentPerMinute) / 600_000);
}
