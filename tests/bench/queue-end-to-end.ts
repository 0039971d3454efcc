/**
 * Benchmark: a 65,536-cell pair sweep end to end through the queue, against the engine alone.
 *
 * 1. The sweep is submitted with lib/queue/submit on an in-memory PGlite (a studio granted
 *    minutes through the ledger) and run by the real QueueRunner on the worker-thread pool until
 *    it is done; its wall time (submit + run) is set against `runSweep(spec)` on the same pool
 *    (same threads; it plans the same chunks the submit does, and both sides' times include that
 *    planning). The runner keys the stored runs for the result cache once the sweep is done, while
 *    its pool is idle; that keying is left to finish, untimed, before the next round. Target: the
 *    ratio of the medians ≤ 1.15×. Both sides get one untimed warm-up run,
 *    then ROUNDS rounds alternate engine and queue; each queue run is in a studio with no cache.
 * 2. GET …/sweeps/{sweepId}/cells (JSON and `?format=csv`) for that sweep, through the route
 *    handler as the integration tests call it: median of 3, target < 1 s, and the response size;
 *    and the sweep page's poll while a sweep runs, `?after=<cursor>`, when one chunk has landed
 *    since (the cursor before the sweep's last row) and when nothing has.
 *
 * Prints figures and asserts nothing. Run alone: `npx tsx --import ./scripts/server-only-hook.mjs tests/bench/queue-end-to-end.ts`; or
 * through tests/bench/run-all.ts as `queueEndToEnd`.
 */
import path from "node:path";
import { performance as nodePerformance } from "node:perf_hooks";
import { fileURLToPath } from "node:url";
import { desc, eq } from "drizzle-orm";
import type { Db } from "@/db/client";
import { sweepResults, sweeps, type Sweep } from "@/db/schema";
import { QueueRunner } from "@/lib/queue/runner";
import { submitSweep } from "@/lib/queue/submit";
import { planChunks } from "@/lib/sweeps/chunks";
import { cellCount, expandAxes } from "@/lib/sweeps/grid";
import { createChunkPool, defaultThreadCount, type ChunkPool } from "@/lib/sweeps/pool";
import { runSweep } from "@/lib/sweeps/run";
import { stepsPerCell, type SweepSpec, type SweepSpecInput } from "@/lib/sweeps/spec";
import * as cellsRoute from "@/app/api/v1/studios/[studioId]/sweeps/[sweepId]/cells/route";
// Aliased: the helper's "use" prefix is not a React hook, and the hooks lint rule goes by the name.
import { closeTestDb, useFreshDb as openFreshTestDb } from "../helpers/db";
import { buildRequest, type RouteHandler } from "../helpers/http";
import { makeSweepStudio } from "../integration/sweeps/support";
import { parsedSpec } from "../unit/sweeps/fixtures";
import { formatSi, table, type BenchModule } from "./bench-module";

const TARGET_RATIO = 1.15;
const TARGET_CELLS_S = 1;
const CELLS_REPEATS = 3;
/** Timed rounds of engine alone then queue (after one warm-up of each). */
const ROUNDS = 7;
/** Rounds of the box sweep (each run takes seconds). */
const BOX_ROUNDS = 5;
/** Enough minutes for the sweep's estimate with room to spare (integer ms). */
const GRANT_MS = 600 * 60_000;
/** A hang guard for the queue run, not a speed check. */
const QUEUE_TIMEOUT_MS = 120_000;

/** An invented shuffleboard game, "Slateglide": puck against a resting puck, 64 × 64 × 16 cells. */
function specInput(): SweepSpecInput {
  return {
    name: "bench: Slateglide puck against a resting puck",
    scenario: {
      scene: { kind: "pair", massAKg: 0.38, massBKg: 0.38, radiusAM: 0.026, radiusBM: 0.026, speedAMPerS: 3, speedBMPerS: 0, offsetFraction: 0, gapM: 0.01 },
      contact: { model: "linear", stiffness: 1e5, damping: { kind: "restitution", value: 0.7 } },
      integrator: "symplectic-euler",
      dtS: 1e-3,
      substeps: 1,
      durationS: 4,
    },
    axes: [
      { parameter: "contact.stiffness", spacing: "log", from: 1e3, to: 1e6, count: 64 },
      { parameter: "scene.speedAMPerS", spacing: "log", from: 0.5, to: 20, count: 64 },
      { parameter: "scene.offsetFraction", spacing: "linear", from: 0, to: 0.95, count: 16 },
    ],
  };
}

/**
 * An invented loading-bay game, "Cratefall": 240 crates (discs) dropped into a bay and settling
 * under gravity, a box sweep of stiffness × step (6 × 6 cells). The discs start spread over the
 * 12 m bay, one per grid cell, and a disc from the top needs about 1.6 s to reach the floor
 * (√(2·12/9.81)); so 3 s of simulated time is what makes the cells contact-heavy (the pile forms
 * and settles). At 0.4 s, the figure this bench used to time, the discs are mostly in free flight
 * and the sweep is a quarter-second of compute: the queue's fixed cost per sweep (submit, first
 * claim, last record: about 45 ms here) is what that figure measures, so it is printed beside the
 * target line as the fixed-cost view, with no target of its own.
 */
function boxSpecInput(durationS: number): SweepSpecInput {
  return {
    name: "bench: Cratefall loading bay",
    scenario: {
      scene: { kind: "box", count: 240, massKg: 2, radiusM: 0.25, widthM: 12, heightM: 12, maxSpeedMPerS: 1, gravityMPerS2: 9.81 },
      contact: { model: "linear", stiffness: 2e5, damping: { kind: "restitution", value: 0.4 } },
      integrator: "symplectic-euler",
      dtS: 1e-3,
      substeps: 1,
      durationS,
    },
    axes: [
      { parameter: "contact.stiffness", spacing: "log", from: 2e4, to: 2e6, count: 6 },
      { parameter: "dtS", spacing: "log", from: 1e-4, to: 1e-3, count: 6 },
    ],
  };
}

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.floor(sorted.length / 2)];
}

function seconds(fromMs: number): number {
  return (performance.now() - fromMs) / 1e3;
}

/**
 * The engine alone on the pool, as a program using the engine runs a sweep: `runSweep(spec)` expands
 * the axes and plans the chunks itself (the same default plan the submit makes, checked), then runs
 * them.
 */
async function engineOnce(spec: SweepSpec, pool: ChunkPool, chunksPlanned: number): Promise<EngineRun> {
  let chunks = 0;
  const started = performance.now();
  const elu = nodePerformance.eventLoopUtilization();
  const summary = await runSweep(spec, { pool, onProgress: (progress) => (chunks = progress.chunks) });
  const wallS = seconds(started);
  const busy = nodePerformance.eventLoopUtilization(elu);
  if (chunks !== chunksPlanned) throw new Error(`runSweep ran ${chunks} chunks where the submit's plan has ${chunksPlanned}`);
  return { wallS, computeMs: summary.wallMs, mainBusyS: busy.active / 1e3 };
}

interface EngineRun {
  wallS: number;
  computeMs: number;
  /** Seconds the main thread was busy (event-loop utilisation). */
  mainBusyS: number;
}

async function sweepRow(db: Db, id: string): Promise<Sweep> {
  const [row] = await db.select().from(sweeps).where(eq(sweeps.id, id));
  return row;
}

interface QueueRun {
  sweep: Sweep;
  submitS: number;
  runS: number;
  totalS: number;
  /** Seconds the main thread was busy (event-loop utilisation) during submit + run. */
  mainBusyS: number;
}

/** Sweeps finished by the runner (its onRecorded hook), so the bench waits without polling the database. */
const finishedSweeps = new Map<string, () => void>();
function whenFinished(sweepId: string): Promise<void> {
  return new Promise((resolve) => finishedSweeps.set(sweepId, resolve));
}
function onRecorded(sweepId: string, sweepFinished: boolean): void {
  if (sweepFinished) finishedSweeps.get(sweepId)?.();
}

/** Submit then run through the queue until done; the runner is already started, as in the server. */
async function throughQueue(db: Db, runner: QueueRunner, studioId: string, input: SweepSpecInput): Promise<QueueRun> {
  const started = performance.now();
  const elu = nodePerformance.eventLoopUtilization();
  const submitted = await submitSweep(db, studioId, { spec: input });
  const submitS = seconds(started);
  runner.poke();
  const runStarted = performance.now();
  const finished = whenFinished(submitted.id);
  let timer: NodeJS.Timeout | undefined;
  const hang = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`sweep ${submitted.id} not done after ${QUEUE_TIMEOUT_MS} ms`)), QUEUE_TIMEOUT_MS);
  });
  await Promise.race([finished, hang]).finally(() => clearTimeout(timer));
  const totalS = seconds(started);
  const busy = nodePerformance.eventLoopUtilization(elu);
  const sweep = await sweepRow(db, submitted.id);
  if (sweep.status !== "done") throw new Error(`sweep ${sweep.id} ended ${sweep.status}: ${sweep.reason ?? ""}`);
  return { sweep, submitS, runS: seconds(runStarted), totalS, mainBusyS: busy.active / 1e3 };
}

/** Median time of the cells route (to the last byte of the body) and the body size in bytes. */
async function timeCellsRoute(studioId: string, sweepId: string, cookie: string, query: string): Promise<{ medianS: number; bytes: number; status: number }> {
  const times: number[] = [];
  let bytes = 0;
  let status = 0;
  for (let i = 0; i < CELLS_REPEATS; i++) {
    const request = buildRequest({ path: `/api/v1/studios/${studioId}/sweeps/${sweepId}/cells${query}`, cookie });
    const started = performance.now();
    const res = await (cellsRoute.GET as unknown as RouteHandler)(request, { params: Promise.resolve({ studioId, sweepId }) });
    const body = await res.arrayBuffer();
    times.push(seconds(started));
    bytes = body.byteLength;
    status = res.status;
  }
  return { medianS: median(times), bytes, status };
}

function formatBytes(bytes: number): string {
  return bytes >= 1e6 ? `${(bytes / 1e6).toFixed(1)} MB` : `${(bytes / 1e3).toFixed(1)} kB`;
}

async function run(): Promise<void> {
  await runWith(specInput(), ROUNDS, true);
}

/** The box sweep through the queue against the engine alone (the cells route is the pair sweep's business). */
async function runBox(): Promise<void> {
  console.log("The settling pile, 3 s simulated per cell (target line):");
  await runWith(boxSpecInput(3), BOX_ROUNDS, false);
  console.log("The same sweep at 0.4 s simulated per cell, mostly free flight (the queue's fixed cost per sweep; no target):");
  await runWith(boxSpecInput(0.4), BOX_ROUNDS, false, null);
}

async function runWith(input: SweepSpecInput, rounds: number, timeCells: boolean, targetRatio: number | null = TARGET_RATIO): Promise<void> {
  const spec = parsedSpec(input);
  const cells = cellCount(expandAxes(spec));
  const threads = defaultThreadCount();
  console.log(`${cells} cells × ${stepsPerCell(spec.scenario)} steps = ${formatSi(cells * stepsPerCell(spec.scenario))} cell-steps; ${threads} threads (entry "source")`);

  const planStarted = performance.now();
  const chunksPlanned = planChunks(spec, { axes: expandAxes(spec) }).length;
  const planS = seconds(planStarted);

  const db = await openFreshTestDb();
  const pool = createChunkPool({ threads, entry: "source" });
  const runner = new QueueRunner({ db, pool, onRecorded });
  try {
    // One untimed run of each first: the database's WASM code, the runner's and the engine's paths
    // are compiled once per process, not once per sweep.
    await engineOnce(spec, pool, chunksPlanned);
    await runner.start();
    await throughQueue(db, runner, (await makeSweepStudio("Pebblecourt Warm-up", GRANT_MS)).studioId, input);
    while (runner.runsToKey > 0) await new Promise((resolve) => setTimeout(resolve, 20));
    await runner.stop();
    // Then ROUNDS rounds of engine alone, queue, alternating so a slower spell of the machine falls
    // on both sides. The runner is stopped while the engine runs alone. Each queue run is in a new
    // studio: nothing comes from the result cache.
    const engineRuns: EngineRun[] = [];
    const queueRuns: QueueRun[] = [];
    let studio: Awaited<ReturnType<typeof makeSweepStudio>> | undefined;
    for (let round = 0; round < rounds; round++) {
      engineRuns.push(await engineOnce(spec, pool, chunksPlanned));
      studio = await makeSweepStudio(`Pebblecourt Games ${round + 1}`, GRANT_MS);
      await runner.start();
      queueRuns.push(await throughQueue(db, runner, studio.studioId, input));
      // Untimed: the runner keys the stored runs for the result cache while the pool is idle
      // (after the sweep is done); let it finish before the engine's next turn.
      while (runner.runsToKey > 0) await new Promise((resolve) => setTimeout(resolve, 20));
      await runner.stop();
    }
    if (!studio) throw new Error("no rounds ran");
    const engineS = median(engineRuns.map((r) => r.wallS));
    const totalS = median(queueRuns.map((r) => r.totalS));
    const list = (values: number[]) => values.map((v) => v.toFixed(3)).join(" ");

    const rows: (string | number)[][] = [
      ["path", `median of ${rounds} s`, "each run s", "note"],
      ["runSweep (engine on pool)", engineS.toFixed(3), list(engineRuns.map((r) => r.wallS)), `its own planning included (planning alone ${planS.toFixed(3)} s); ${chunksPlanned} chunks; worker compute ${list(engineRuns.map((r) => r.computeMs / 1e3))} s; main thread busy ${list(engineRuns.map((r) => r.mainBusyS))} s`],
      ["queue: submit", median(queueRuns.map((r) => r.submitS)).toFixed(3), list(queueRuns.map((r) => r.submitS)), "validate, plan, check limits, write sweep + chunks"],
      ["queue: run to done", median(queueRuns.map((r) => r.runS)).toFixed(3), list(queueRuns.map((r) => r.runS)), `billed ${list(queueRuns.map((r) => r.sweep.computeMs / 1e3))} s; expected ${(queueRuns[0].sweep.estimatedComputeMs / 1e3).toFixed(3)} s`],
      ["queue: total", totalS.toFixed(3), list(queueRuns.map((r) => r.totalS)), `submit + run; main thread busy ${list(queueRuns.map((r) => r.mainBusyS))} s`],
    ];
    console.log(table(rows));
    const ratios = queueRuns.map((r, i) => r.totalS / engineRuns[i].wallS);
    console.log(
      // The median of the per-round ratios pairs each queue run with the engine run beside it (same
      // load), which a loaded machine's swings between rounds do not move as they move the medians' ratio.
      `queue total / runSweep (medians): ${(totalS / engineS).toFixed(2)}× ${targetRatio === null ? "(no target)" : `(target ≤ ${targetRatio}×)`}; per round: ${ratios.map((r) => r.toFixed(2)).join(" ")} (median ${median(ratios).toFixed(2)}×); ` +
        `${queueRuns[0].sweep.cellsDone} cells done per queue run`,
    );
    if (!timeCells) return;

    const lastSweepId = queueRuns[queueRuns.length - 1].sweep.id;
    const json = await timeCellsRoute(studio.studioId, lastSweepId, studio.cookies.owner, "");
    const csv = await timeCellsRoute(studio.studioId, lastSweepId, studio.cookies.owner, "?format=csv");
    // The sweep's two newest change cursors: after the second, one chunk is new (a poll while the sweep runs); after the first, none.
    const newest = await db
      .select({ cursor: sweepResults.recordedSeq })
      .from(sweepResults)
      .where(eq(sweepResults.sweepId, lastSweepId))
      .orderBy(desc(sweepResults.recordedSeq))
      .limit(2);
    const oneChunk = await timeCellsRoute(studio.studioId, lastSweepId, studio.cookies.owner, `?after=${newest[newest.length - 1].cursor}`);
    const nothing = await timeCellsRoute(studio.studioId, lastSweepId, studio.cookies.owner, `?after=${newest[0].cursor}`);
    console.log(
      table([
        ["GET …/cells", "status", `median of ${CELLS_REPEATS} s`, "size", "target"],
        ["JSON", json.status, json.medianS.toFixed(3), formatBytes(json.bytes), `< ${TARGET_CELLS_S} s`],
        ["?format=csv", csv.status, csv.medianS.toFixed(3), formatBytes(csv.bytes), `< ${TARGET_CELLS_S} s`],
        [`?after= (one chunk of ${chunksPlanned} new)`, oneChunk.status, oneChunk.medianS.toFixed(3), formatBytes(oneChunk.bytes), "the sweep page's poll"],
        ["?after= (nothing new)", nothing.status, nothing.medianS.toFixed(3), formatBytes(nothing.bytes), "the sweep page's poll"],
      ]),
    );
  } finally {
    await runner.stop();
    await pool.close();
    await closeTestDb();
  }
}

/** For tests/bench/run-all.ts (BENCH_MODULES). */
export const queueEndToEnd: BenchModule = {
  id: "queue-end-to-end",
  title: "a 65,536-cell pair sweep through submit + queue runner vs runSweep, and the cells route",
  run,
};

/** For tests/bench/run-all.ts (BENCH_MODULES): the same comparison on a contact-heavy box sweep. */
export const queueBoxEndToEnd: BenchModule = {
  id: "queue-box-end-to-end",
  title: "a 36-cell box sweep (240 discs settling under gravity, 3 s and 0.4 s simulated) through submit + queue runner vs runSweep",
  run: runBox,
};

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  run().catch((error: unknown) => {
    console.error(error);
    process.exitCode = 1;
  });
}
