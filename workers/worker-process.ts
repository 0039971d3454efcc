/**
 * The standalone worker process (`npm run worker`): the same QueueRunner the app server runs
 * in-process, on its own worker-thread pool, against the PostgreSQL named by DATABASE_URL. Start as
 * many as the load needs, on any number of hosts; they share the queue through
 * `FOR UPDATE SKIP LOCKED` claims and leases renewed every third of the lease (the heartbeat).
 *
 * - SIGTERM / SIGINT: stop claiming, give running chunks KICKDRIFT_SHUTDOWN_GRACE_MS to land and be
 *   written, hand back whatever is still held (straight to the queue, no lease wait), exit 0.
 * - SIGKILL (or a lost host): nothing is written; the chunks it held come back to the queue when
 *   their lease lapses, and another worker runs them (billed once: the ledger key is per chunk).
 * - Its own small HTTP server answers GET /health (alive), /ready (database answers and the runner
 *   claims) and /metrics (this worker's figures, Prometheus text format).
 *
 * Settings (environment): DATABASE_URL (required), KICKDRIFT_WORKER_THREADS (default one per
 * core), KICKDRIFT_WORKER_PORT (default 3100; 0 picks a free port), KICKDRIFT_WORKER_HOST
 * (default 0.0.0.0), KICKDRIFT_LEASE_MS (default 60000), KICKDRIFT_POLL_MS (default 250),
 * KICKDRIFT_SHUTDOWN_GRACE_MS (default 8000), KICKDRIFT_WORKER_ENTRY (source | bundle; default source).
 *
 * Run with `node --import tsx --import ./scripts/server-only-hook.mjs workers/worker-process.ts` (what `npm run worker` does): one node
 * process, so a signal sent to its pid reaches the runner itself.
 */
import { createServer, type IncomingMessage, type ServerResponse } from "node:http";
import type { AddressInfo } from "node:net";
import os from "node:os";
import { randomBytes } from "node:crypto";
import { closeDb, getDb } from "../db/client";
import { QueueRunner } from "../lib/queue/runner";
import { healthResponse, readinessResponse } from "../lib/ops/endpoints";
import { prometheusResponse, type Metric } from "../lib/ops/prometheus";
import { createChunkPool, type ChunkPool } from "../lib/sweeps/pool";
import { workerConfig, WorkerConfigError, type WorkerConfig } from "./worker-config";

/** This process's own counters (the app's /api/metrics shows the whole queue). */
interface WorkerStats {
  chunksComputed: number;
  cellsComputed: number;
  computeMs: number;
  chunkErrors: number;
  /** When each recent chunk finished and its cells, for the throughput over the last THROUGHPUT_WINDOW_MS. */
  recent: { at: number; cells: number }[];
}

const THROUGHPUT_WINDOW_MS = 60_000;

function cellsPerSecond(stats: WorkerStats, now = performance.now()): number {
  while (stats.recent.length && stats.recent[0].at < now - THROUGHPUT_WINDOW_MS) stats.recent.shift();
  const cells = stats.recent.reduce((sum, r) => sum + r.cells, 0);
  const spanMs = Math.min(THROUGHPUT_WINDOW_MS, process.uptime() * 1000);
  return spanMs > 0 ? Math.round((cells / spanMs) * 1000 * 100) / 100 : 0;
}

/** The pool, counting what its threads compute (a chunk whose lease was lost meanwhile is counted, though not written). */
function countingPool(pool: ChunkPool, stats: WorkerStats): ChunkPool {
  return {
    threads: pool.threads,
    entry: pool.entry,
    async run(task, options) {
      try {
        const outcome = await pool.run(task, options);
        // Keying a stored run (idle time) simulates nothing: not counted as computed cells.
        if (task.kind === "keys") return outcome;
        stats.chunksComputed += 1;
        stats.cellsComputed += outcome.cellCount;
        stats.computeMs += outcome.wallMs;
        stats.recent.push({ at: performance.now(), cells: outcome.cellCount });
        cellsPerSecond(stats);
        return outcome;
      } catch (error) {
        if (!options?.signal?.aborted) stats.chunkErrors += 1;
        throw error;
      }
    },
    get pending() {
      return pool.pending;
    },
    get inFlight() {
      return pool.inFlight;
    },
    idle: () => pool.idle(),
    close: () => pool.close(),
  };
}

function workerMetrics(ownerId: string, threads: number, runner: QueueRunner | null, stats: WorkerStats, ready: boolean): Metric[] {
  const labels = { worker: ownerId };
  const one = (value: number) => [{ labels, value }];
  return [
    { name: "kickdrift_worker_ready", type: "gauge", help: "1 while the worker claims chunks, 0 while it starts or shuts down.", samples: one(ready ? 1 : 0) },
    { name: "kickdrift_worker_threads", type: "gauge", help: "Worker threads of this process.", samples: one(threads) },
    { name: "kickdrift_worker_chunks_held", type: "gauge", help: "Chunks this worker holds a lease on (running or about to).", samples: one(runner?.chunksHeld ?? 0) },
    { name: "kickdrift_worker_cells_per_second", type: "gauge", help: "Cells this worker computed per second over the last minute.", samples: one(cellsPerSecond(stats)) },
    { name: "kickdrift_worker_chunks_computed_total", type: "counter", help: "Chunks this worker's threads computed.", samples: one(stats.chunksComputed) },
    { name: "kickdrift_worker_cells_computed_total", type: "counter", help: "Cells this worker's threads computed.", samples: one(stats.cellsComputed) },
    { name: "kickdrift_worker_compute_ms_total", type: "counter", help: "Wall time of this worker's chunks on their threads, in milliseconds (capacity; bills use work units).", samples: one(stats.computeMs) },
    { name: "kickdrift_worker_chunk_errors_total", type: "counter", help: "Chunks whose run threw (retried up to the attempt limit).", samples: one(stats.chunkErrors) },
  ];
}

async function send(res: ServerResponse, response: Response): Promise<void> {
  const body = Buffer.from(await response.arrayBuffer());
  res.writeHead(response.status, Object.fromEntries(response.headers));
  res.end(body);
}

function log(message: string): void {
  console.log(`[kickdrift-worker] ${message}`);
}

export async function main(): Promise<void> {
  let config: WorkerConfig;
  try {
    config = workerConfig();
  } catch (error) {
    if (!(error instanceof WorkerConfigError)) throw error;
    console.error(`[kickdrift-worker] ${error.message}`);
    process.exit(2);
  }
  const ownerId = `wrk_${os.hostname()}_${process.pid}_${randomBytes(4).toString("hex")}`;
  const stats: WorkerStats = { chunksComputed: 0, cellsComputed: 0, computeMs: 0, chunkErrors: 0, recent: [] };
  let runner: QueueRunner | null = null;
  let shuttingDown = false;
  const ready = () => runner !== null && runner.isRunning && !shuttingDown;

  const server = createServer((req: IncomingMessage, res: ServerResponse) => {
    const path = new URL(req.url ?? "/", "http://worker").pathname;
    const answer = async (): Promise<Response> => {
      if (req.method !== "GET" && req.method !== "HEAD")
        return Response.json({ error: { code: "method_not_allowed", message: `Method ${req.method} is not allowed here; allowed: GET, HEAD.` } }, { status: 405, headers: { allow: "GET, HEAD" } });
      if (path === "/health") return healthResponse("worker", { worker: ownerId });
      if (path === "/ready")
        return readinessResponse("worker", getDb, {
          failure: ready() ? null : shuttingDown ? "the worker is shutting down" : "the worker is starting",
          details: { worker: ownerId, threads: config.threads, chunksHeld: runner?.chunksHeld ?? 0 },
        });
      if (path === "/metrics") return prometheusResponse(workerMetrics(ownerId, config.threads, runner, stats, ready()));
      return Response.json({ error: { code: "not_found", message: `No worker endpoint at ${path}; try /health, /ready or /metrics.` } }, { status: 404 });
    };
    answer()
      .then((response) => send(res, response))
      .catch((error: unknown) => {
        console.error("[kickdrift-worker] endpoint:", error);
        if (!res.headersSent) res.writeHead(500, { "content-type": "application/json; charset=utf-8" });
        res.end(JSON.stringify({ error: { code: "internal_error", message: "Something went wrong on our side." } }));
      });
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(config.port, config.host, () => resolve());
  });
  const address = server.address() as AddressInfo;
  log(`${ownerId}: endpoints on http://${address.address}:${address.port} (/health, /ready, /metrics)`);

  const shutdown = async (signal: string) => {
    if (shuttingDown) return;
    shuttingDown = true;
    log(`${signal}: no new chunks; ${runner?.chunksHeld ?? 0} held, up to ${config.shutdownGraceMs} ms for them to land`);
    let code = 0;
    try {
      const { returned } = runner ? await runner.shutdown(config.shutdownGraceMs) : { returned: 0 };
      log(returned > 0 ? `${returned} chunk(s) handed back to the queue` : "every chunk it held has landed");
      await closeDb();
    } catch (error) {
      console.error("[kickdrift-worker] shutdown:", error);
      code = 1;
    }
    server.close();
    // Threads still computing a handed-back chunk are ended with the process.
    process.exit(code);
  };
  process.on("SIGTERM", () => void shutdown("SIGTERM"));
  process.on("SIGINT", () => void shutdown("SIGINT"));

  const db = await getDb(); // migrations run here, one process at a time (advisory lock)
  if (shuttingDown) return;
  const pool = countingPool(createChunkPool({ threads: config.threads, entry: config.entry }), stats);
  // One chunk more than threads: the next chunk is claimed and waiting while a finished one is
  // written, so no thread sits idle between chunks (its lease is renewed like the others).
  runner = new QueueRunner({ db, pool, ownerId, leaseMs: config.leaseMs, pollMs: config.pollMs, concurrency: config.threads + 1 });
  await runner.start();
  log(`${ownerId}: ready (${config.threads} thread(s), lease ${config.leaseMs} ms, grace ${config.shutdownGraceMs} ms)`);
}

main().catch((error: unknown) => {
  console.error("[kickdrift-worker] could not start:", error);
  process.exit(1);
});
