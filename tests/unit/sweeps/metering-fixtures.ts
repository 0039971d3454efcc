/**
 * Shared by the metering tests in-process (tests/unit/sweeps/metering.test.ts) and on PostgreSQL
 * worker processes (tests/integration/scaleout/metering.test.ts): the three kinds of sweep, the bill
 * recomputed independently, and a load beside the sweep.
 */
import { Worker } from "node:worker_threads";
import { simulate } from "../../../lib/physics/index";
import { expandSweep } from "../../../lib/sweeps/grid";
import { billedMsOfUnits } from "../../../lib/sweeps/metering";
import { type SweepSpec } from "../../../lib/sweeps/spec";
import { ballPitBoxSpec, crateDropSnapshotSpec, puckPairSpec, parsedSpec } from "./fixtures";

/** A pair, a box and a snapshot sweep, by kind. */
export const METERING_SPECS: [string, SweepSpec][] = [
  ["pair", parsedSpec(puckPairSpec())],
  ["box", parsedSpec(ballPitBoxSpec())],
  ["snapshot", parsedSpec(crateDropSnapshotSpec())],
];

/** The bill recomputed independently: every cell simulated in this thread, units summed, rounded up once. */
export function referenceBillMs(spec: SweepSpec): number {
  return billedMsOfUnits(expandSweep(spec).reduce((sum, cell) => sum + simulate(cell.scenario).workUnits, 0));
}

/** `count` threads spinning until stopped: the cores kept busy beside the sweep. */
export function busyLoops(count: number): { stop: () => Promise<void> } {
  const flag = new Int32Array(new SharedArrayBuffer(4));
  const workers = Array.from(
    { length: count },
    () =>
      new Worker(
        `const { workerData } = require("node:worker_threads"); const f = new Int32Array(workerData); let x = 0; while (Atomics.load(f, 0) === 0) { for (let i = 0; i < 1e5; i++) x = (x * 31 + i) | 0; }`,
        { eval: true, workerData: flag.buffer },
      ),
  );
  return {
    async stop() {
      Atomics.store(flag, 0, 1);
      await Promise.all(workers.map((worker) => worker.terminate()));
    },
  };
}
