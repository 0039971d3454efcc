/** Integer milliseconds of compute shown as minutes with two decimals, e.g. 90_500 → "1.51" (rounded half up). */
export function formatMinutes(ms: number): string {
  const hundredths = Math.round((ms / 60_000) * 100);
  const sign = hundredths < 0 ? "-" : "";
  const abs = Math.abs(hundredths);
  return `${sign}${Math.floor(abs / 100).toLocaleString("en-US")}.${String(abs % 100).padStart(2, "0")}`;
}
