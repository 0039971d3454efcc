/**
 * Benchmark: sweep throughput with 1, 2 and 4 worker processes (`npm run worker`, one thread
 * each) sharing one PostgreSQL, against the engine alone (`runSweep` on the thread pool, no
 * database) with one thread and with one thread per core.
 *
 * Each worker run gets a fresh database; the workers are started and ready before the sweep is
 * submitted, and the clock runs from submit to the sweep's `done` (so it includes the claims,
 * leases, result writes and ledger debits, not process start-up). Every run uses the same chunk
 * plan. On a machine with fewer cores than workers the extra processes only share the cores.
 *
 * PostgreSQL: KICKDRIFT_TEST_PG_URL if set (as under `npm test`), else a throw-away cluster of
 * Debian's postgresql (scripts/temp-postgres.ts); without PostgreSQL it prints why and skips.
 * Prints figures and asserts nothing. Run alone: `npx tsx --import ./scripts/server-only-hook.mjs tests/bench/scale-out.ts`.
 */
import path from "node:path";
import { fileURLToPath } from "node:url";
import { eq } from "drizzle-orm";
import { closeDb, getDb, type Db } from "@/db/client";
import { sweeps } from "@/db/schema";
import { submitSweep } from "@/lib/queue/submit";
import { planChunks } from "@/lib/sweeps/chunks";
import { cellCount, expandAxes } from "@/lib/sweeps/grid";
import { createChunkPool, defaultThreadCount } from "@/lib/sweeps/pool";
import { runSweep } from "@/lib/sweeps/run";
import { parseSweepSpec, stepsPerCell, type SweepSpec } from "@/lib/sweeps/spec";
import { startTempPostgres, type TempPostgres } from "../../scripts/temp-postgres";
import { setTestEnv } from "../helpers/db";
import { makeSweepStudio } from "../integration/sweeps/support";
import { crateBinSpec, startWorker, type WorkerHandle } from "../integration/scaleout/support";
import { formatSi, table, type BenchModule } from "./bench-module";

const WORKER_COUNTS = [1, 2, 4];
const CHUNK_OPTIONS = { maxCellsPerChunk: 128 };
const GRANT_MS = 600 * 60_000;
/** A hang guard, not a speed check. */
const SWEEP_TIMEOUT_MS = 300_000;

function spec(): SweepSpec {
  const parsed = parseSweepSpec(crateBinSpec(2));
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
  return parsed.spec;
}

function seconds(fromMs: number): number {
  return (performance.now() - fromMs) / 1e3;
}

async function engineAlone(sweepSpec: SweepSpec, threads: number): Promise<number> {
  const pool = createChunkPool({ threads, entry: "source" });
  try {
    const axes = expandAxes(sweepSpec);
    const plan = planChunks(sweepSpec, { ...CHUNK_OPTIONS, axes });
    await runSweep(sweepSpec, { pool, axes, plan }); // warm-up
    const started = performance.now();
    await runSweep(sweepSpec, { pool, axes, plan });
    return seconds(started);
  } finally {
    await pool.close();
  }
}

async function freshDatabase(adminUrl: string, label: string): Promise<string> {
  const { Client } = await import("pg");
  const admin = new Client({ connectionString: adminUrl });
  await admin.connect();
  const name = `kd_bench_${label}_${process.pid}`;
  await admin.query(`drop database if exists ${name} with (force)`);
  await admin.query(`create database ${name}`);
  await admin.end();
  const url = new URL(adminUrl);
  url.pathname = `/${name}`;
  return url.toString();
}

async function throughWorkers(adminUrl: string, count: number): Promise<{ wallS: number; chunks: number; computeMs: number }> {
  const url = await freshDatabase(adminUrl, `w${count}`);
  process.env.DATABASE_URL = url;
  await closeDb();
  const db: Db = await getDb();
  const workers: WorkerHandle[] = [];
  try {
    workers.push(...(await Promise.all(Array.from({ length: count }, () => startWorker(url, { KICKDRIFT_POLL_MS: "50" }, 120_000)))));
    const studio = await makeSweepStudio(`Crate Cascade bench ×${count}`, GRANT_MS);
    const started = performance.now();
    const sweep = await submitSweep(db, studio.studioId, { spec: crateBinSpec(2) }, { chunkOptions: CHUNK_OPTIONS });
    for (;;) {
      const [row] = await db.select().from(sweeps).where(eq(sweeps.id, sweep.id));
      if (row.status === "done") return { wallS: seconds(started), chunks: row.chunks, computeMs: row.computeMs };
      if (row.status !== "queued" && row.status !== "running") throw new Error(`sweep ended ${row.status}: ${row.reason ?? ""}`);
      if (performance.now() - started > SWEEP_TIMEOUT_MS) throw new Error(`sweep still ${row.status} (${row.chunksDone}/${row.chunks}) after ${SWEEP_TIMEOUT_MS} ms`);
      await new Promise((resolve) => setTimeout(resolve, 20));
    }
  } finally {
    for (const worker of workers) worker.child.kill("SIGTERM");
    await Promise.all(workers.map((worker) => worker.exited));
    await closeDb();
    delete process.env.DATABASE_URL;
  }
}

async function run(): Promise<void> {
  setTestEnv();
  let temp: TempPostgres | null = null;
  let adminUrl = process.env.KICKDRIFT_TEST_PG_URL ?? "";
  if (!adminUrl) {
    try {
      temp = await startTempPostgres();
      adminUrl = temp.url;
    } catch (error) {
      console.log(`skipped: ${(error as Error).message.split("\n")[0]}`);
      return;
    }
  }
  try {
    const sweepSpec = spec();
    const cells = cellCount(expandAxes(sweepSpec));
    const chunks = planChunks(sweepSpec, CHUNK_OPTIONS).length;
    const cores = defaultThreadCount();
    console.log(`${cells} cells × ${stepsPerCell(sweepSpec.scenario)} steps (six crates in a bin), ${chunks} chunks of ≤ ${CHUNK_OPTIONS.maxCellsPerChunk} cells; ${cores} cores`);

    const engine1 = await engineAlone(sweepSpec, 1);
    const engineAll = await engineAlone(sweepSpec, cores);
    const rows: (string | number)[][] = [
      ["path", "threads", "wall s", "cells/s", "× engine 1 thread", "note"],
      ["engine alone", 1, engine1.toFixed(2), formatSi(cells / engine1), "1.00", "runSweep on the pool, no database"],
      ["engine alone", cores, engineAll.toFixed(2), formatSi(cells / engineAll), (engine1 / engineAll).toFixed(2), "one thread per core"],
    ];
    for (const count of WORKER_COUNTS) {
      const result = await throughWorkers(adminUrl, count);
      rows.push([
        `${count} worker process${count > 1 ? "es" : ""}`,
        count,
        result.wallS.toFixed(2),
        formatSi(cells / result.wallS),
        (engine1 / result.wallS).toFixed(2),
        `submit → done on PostgreSQL; billed ${result.computeMs} ms`,
      ]);
    }
    console.log(table(rows));
  } finally {
    temp?.stop();
  }
}

/** For tests/bench/run-all.ts (BENCH_MODULES). */
export const scaleOut: BenchModule = {
  id: "scale-out",
  title: "sweep throughput with 1, 2 and 4 worker processes on PostgreSQL vs the engine alone",
  run,
};

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  run()
    .then(() => process.exit(0))
    .catch((error: unknown) => {
      console.error(error);
      process.exit(1);
    });
}
