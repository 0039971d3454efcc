/**
 * The worker-thread pool that runs chunks: piscina threads (one per core by
 * default) behind a p-queue that bounds the chunks in flight, so a sweep of
 * thousands of chunks never floods piscina's queue or memory, and the server's
 * queue runner can use the same gate.
 *
 * The worker entry is loaded one of two ways:
 * - "source": workers/chunk-worker.ts through tsx (`execArgv: ["--import", tsx]`),
 *   for the CLI, tests and benchmarks;
 * - "bundle": .build/chunk-worker.mjs made by `node scripts/build-worker.mjs`
 *   (part of `npm run build`), for the Next.js server, whose own bundle cannot
 *   hand a .ts file to a thread.
 * Paths are taken from the working directory (the repository root under npm
 * scripts and `next start`), not from import.meta.url, which points into the
 * server bundle under Next.
 *
 * Node only (worker threads).
 */
import "server-only";
import { existsSync } from "node:fs";
import { createRequire } from "node:module";
import { availableParallelism } from "node:os";
import path from "node:path";
import { pathToFileURL } from "node:url";
import PQueue from "p-queue";
import Piscina from "piscina";
import { warmUpTask, type ChunkOutcome, type ChunkTask } from "./chunk-task";

export type WorkerEntry = "source" | "bundle";

const WARM_UP_CHUNKS_PER_THREAD = 1;

export interface ChunkPoolOptions {
  /** Worker threads; default one per core. */
  threads?: number;
  /** Chunks submitted to the threads at once; default 2 × threads (one running, one waiting per thread). */
  maxInFlight?: number;
  /** How to load the worker entry; default "bundle" under Next.js, "source" elsewhere. */
  entry?: WorkerEntry;
  /** Repository root holding workers/ and .build/; default process.cwd(). */
  rootDir?: string;
  /** Run unbilled warm-up chunks on every thread before the first real chunk (default true). */
  warmUp?: boolean;
}

export interface ChunkPool {
  readonly threads: number;
  readonly entry: WorkerEntry;
  /**
   * Run one chunk on a worker thread (waits for a slot when maxInFlight chunks are running).
   * Aborting the signal drops the chunk if it is still waiting, and stops it if it is running:
   * piscina ends that thread (a simulation cannot be interrupted from inside) and starts a fresh one.
   */
  run(task: ChunkTask, options?: { signal?: AbortSignal }): Promise<ChunkOutcome>;
  /** Chunks waiting for a slot, and chunks running. */
  readonly pending: number;
  readonly inFlight: number;
  /** Resolves once no chunk is waiting or running. */
  idle(): Promise<void>;
  /** Finish running chunks, then stop the threads. */
  close(): Promise<void>;
}

export function defaultThreadCount(): number {
  return Math.max(1, availableParallelism());
}

function defaultEntry(): WorkerEntry {
  return process.env.NEXT_RUNTIME ? "bundle" : "source";
}

function tsxImportArgs(rootDir: string): string[] {
  const requireFromRoot = createRequire(path.join(rootDir, "package.json"));
  return ["--import", pathToFileURL(requireFromRoot.resolve("tsx")).href];
}

export function createChunkPool(options: ChunkPoolOptions = {}): ChunkPool {
  const threads = options.threads ?? defaultThreadCount();
  if (!Number.isInteger(threads) || threads < 1) throw new RangeError(`threads must be an integer ≥ 1; got ${threads}`);
  const maxInFlight = options.maxInFlight ?? threads * 2;
  if (!Number.isInteger(maxInFlight) || maxInFlight < 1) throw new RangeError(`maxInFlight must be an integer ≥ 1; got ${maxInFlight}`);
  const entry = options.entry ?? defaultEntry();
  const rootDir = options.rootDir ?? process.cwd();

  let filename: string;
  let execArgv: string[];
  if (entry === "bundle") {
    filename = path.join(rootDir, ".build", "chunk-worker.mjs");
    if (!existsSync(filename)) throw new Error(`worker bundle ${filename} is missing: run \`node scripts/build-worker.mjs\` (npm run build does)`);
    execArgv = [];
  } else {
    filename = path.join(rootDir, "workers", "chunk-worker.ts");
    if (!existsSync(filename)) throw new Error(`worker entry ${filename} is missing (run from the repository root)`);
    execArgv = tsxImportArgs(rootDir);
  }

  const piscina = new Piscina<ChunkTask, ChunkOutcome>({
    filename: pathToFileURL(filename).href,
    execArgv,
    minThreads: threads,
    // minThreads = maxThreads keeps every thread alive between sweeps: chunks arrive in bursts.
    maxThreads: threads,
  });
  // A chunk stopped on its thread (an aborted signal) can race with that thread's answer; piscina
  // then reports the answer as unexpected on its 'error' event, which would throw without a listener.
  piscina.on("error", (error: unknown) => {
    if (!(error instanceof Error && error.message.startsWith("Unexpected message from Worker"))) console.error("[kickdrift] worker pool:", error);
  });
  const queue = new PQueue({ concurrency: maxInFlight });
  // One warm-up chunk per thread, run before any real chunk (the queue is paused until they finish).
  // It takes the compile-on-first-use cost; a fresh thread's first few real chunks still run
  // slower while its heap grows (about 0.1 s in total, measured on the pair-throughput grid).
  if (options.warmUp ?? true) {
    queue.pause();
    const warmUps = Array.from({ length: threads * WARM_UP_CHUNKS_PER_THREAD }, () => piscina.run(warmUpTask()));
    void Promise.allSettled(warmUps).then(() => queue.start());
  }

  return {
    threads,
    entry,
    // The signal is checked when the chunk's turn comes (no listener per queued chunk: a sweep
    // may queue thousands).
    run: (task, runOptions) =>
      queue.add(() => {
        const signal = runOptions?.signal;
        if (signal?.aborted) return Promise.reject(new Error(`chunk ${task.chunkIndex} dropped: ${String(signal.reason ?? "aborted")}`));
        return signal ? piscina.run(task, { signal }) : piscina.run(task);
      }),
    get pending() {
      return queue.size;
    },
    get inFlight() {
      return queue.pending;
    },
    idle: () => queue.onIdle(),
    async close() {
      await queue.onIdle();
      await piscina.close();
    },
  };
}

const POOL_KEY = Symbol.for("kickdrift.chunkPool");
type PoolHolder = { [POOL_KEY]?: ChunkPool };

/**
 * The process-wide pool, created on first use and kept on globalThis so hot
 * reload and several importers share one set of threads.
 */
export function getChunkPool(options?: ChunkPoolOptions): ChunkPool {
  const holder = globalThis as PoolHolder;
  holder[POOL_KEY] ??= createChunkPool(options);
  return holder[POOL_KEY];
}

/** Close and forget the process-wide pool (tests, shutdown). */
export async function closeChunkPool(): Promise<void> {
  const holder = globalThis as PoolHolder;
  const pool = holder[POOL_KEY];
  delete holder[POOL_KEY];
  if (pool) await pool.close();
}
