/** Minutes for people, from integer milliseconds. */
export function minutes(ms: number): string {
  return `${(ms / 60_000).toLocaleString("en", { maximumFractionDigits: 2 })} min`;
}
