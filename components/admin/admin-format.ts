/** Minutes for people, from integer milliseconds. */
export function minutes(ms: number): string {
  return `${(ms / 60_000).toLocaleString("en", { maximumFractionDigits: 2 })} min`;
}

export const th = "px-3 py-2 text-left text-xs font-semibold uppercase tracking-wider text-ink-muted";
export const td = "px-3 py-2.5";
