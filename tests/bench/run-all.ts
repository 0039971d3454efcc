/**
 * `npm run bench [-- id …]`: runs the benchmark modules in order and prints
 * their figures. Benchmarks assert nothing; targets are printed beside figures.
 * Add a module by appending it to BENCH_MODULES.
 */
import type { BenchModule } from "./bench-module";
import { boxScaling } from "./box-scaling";
import { contactKernel } from "./contact-kernel";
import { frictionBench } from "./friction";
import { costCalibration } from "./cost-calibration";
import { firstVisit } from "./first-visit";
import { mapRender } from "./map-render";
import { metering } from "./metering";
import { workUnitCalibration } from "./work-unit-calibration";
import { pairThroughput } from "./pair-throughput";
import { queueBoxEndToEnd, queueEndToEnd } from "./queue-end-to-end";
import { requestHardening } from "./request-hardening";
import { scaleOut } from "./scale-out";
import { webhookIsolation } from "./webhook-isolation";

export const BENCH_MODULES: BenchModule[] = [pairThroughput, contactKernel, boxScaling, frictionBench, costCalibration, workUnitCalibration, metering, mapRender, queueEndToEnd, queueBoxEndToEnd, scaleOut, webhookIsolation, requestHardening, firstVisit];

async function main() {
  const wanted = process.argv.slice(2);
  const unknown = wanted.filter((id) => !BENCH_MODULES.some((bench) => bench.id === id));
  if (unknown.length) {
    console.error(`unknown benchmark ${unknown.join(", ")}; available: ${BENCH_MODULES.map((bench) => bench.id).join(", ")}`);
    process.exit(2);
  }
  const modules = wanted.length ? BENCH_MODULES.filter((bench) => wanted.includes(bench.id)) : BENCH_MODULES;
  console.log(`node ${process.version}, ${new Date().toISOString()}`);
  for (const bench of modules) {
    console.log(`\n== ${bench.id}: ${bench.title}`);
    const started = performance.now();
    await bench.run();
    console.log(`(${((performance.now() - started) / 1e3).toFixed(1)} s)`);
  }
}

main().catch((error: unknown) => {
  console.error(error);
  process.exit(1);
});
