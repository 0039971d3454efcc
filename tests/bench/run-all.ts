/**
 * `npm run bench [-- id …]`: runs the benchmark modules in order and prints
 * their figures. Benchmarks assert nothing; targets are printed beside figures.
 * Add a module by appending it to BENCH_MODULES (queue end-to-end etc. later).
 */
import type { BenchModule } from "./bench-module";
import { boxScaling } from "./box-scaling";
import { costCalibration } from "./cost-calibration";
import { pairThroughput } from "./pair-throughput";

export const BENCH_MODULES: BenchModule[] = [pairThroughput, boxScaling, costCalibration];

async function main() {
  const wanted = process.argv.slice(2);
  const unknown = wanted.filter((id) => !BENCH_MODULES.some((module) => module.id === id));
  if (unknown.length) {
    console.error(`unknown benchmark ${unknown.join(", ")}; available: ${BENCH_MODULES.map((module) => module.id).join(", ")}`);
    process.exit(2);
  }
  const modules = wanted.length ? BENCH_MODULES.filter((module) => wanted.includes(module.id)) : BENCH_MODULES;
  console.log(`node ${process.version}, ${new Date().toISOString()}`);
  for (const module of modules) {
    console.log(`\n== ${module.id}: ${module.title}`);
    const started = performance.now();
    await module.run();
    console.log(`(${((performance.now() - started) / 1e3).toFixed(1)} s)`);
  }
}

main().catch((error: unknown) => {
  console.error(error);
  process.exit(1);
});
