/** A benchmark prints figures and asserts nothing; run-all.ts runs the list in BENCH_MODULES. */
export interface BenchModule {
  /** Short id, used to pick modules: `npm run bench -- pair-throughput`. */
  id: string;
  title: string;
  run(): Promise<void>;
}

/** Best (smallest) of `repeats` timings of fn, in ns; one untimed warm-up call first. */
export function bestOfNs(repeats: number, fn: () => void): number {
  fn();
  let best = Number.POSITIVE_INFINITY;
  for (let i = 0; i < repeats; i++) {
    const started = process.hrtime.bigint();
    fn();
    const elapsed = Number(process.hrtime.bigint() - started);
    if (elapsed < best) best = elapsed;
  }
  return best;
}

export function formatSi(value: number, digits = 3): string {
  if (!Number.isFinite(value)) return String(value);
  const exponent = Math.floor(Math.log10(Math.abs(value)) || 0);
  return exponent >= 6 || exponent <= -3 ? value.toExponential(digits - 1) : value.toPrecision(digits);
}

export function table(rows: (string | number)[][]): string {
  const widths = rows[0].map((_, column) => Math.max(...rows.map((row) => String(row[column]).length)));
  return rows.map((row) => row.map((cell, column) => String(cell).padStart(widths[column])).join("  ")).join("\n");
}
