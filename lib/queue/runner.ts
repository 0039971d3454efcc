/**
 * The queue runner: claims queued chunks with a lease, runs them on the worker-thread pool, and
 * records each finished chunk (results, counters and debit in one transaction). Its jobs, one
 * module each:
 *   - the loop, the chunks in flight and the runner's life (start, stop, crash, shutdown): here;
 *   - when the loop does what: ./pacing.ts;
 *   - leases (renewal, lapsed and released leases): ./leases.ts;
 *   - claiming and recording, the queue's SQL functions: ./sql-functions.ts, ./recording.ts;
 *   - the failure policy (retries, failing a sweep, discarding a stopped sweep's chunk): ./failures.ts;
 *   - result-cache keys added while the pool is idle: ./keying.ts;
 *   - what a chunk needs of its sweep: ./sweep-info.ts.
 *
 * Limits (lib/quotas/enforce.ts) pause and resume sweeps at chunk boundaries; claims share the
 * pool out between studios (fair share) and start a queued sweep only while its studio runs fewer
 * sweeps than its limit.
 *
 * The main thread does as little per cell as it can (the workers pack the results; the
 * main thread stores one blob per chunk), because on a machine whose cores all run workers any
 * main-thread work adds to a sweep's wall time. It holds several chunks per pool thread, so each
 * thread starts its next chunk while the previous one is being stored. Claims use
 * `FOR UPDATE SKIP LOCKED`, so several processes can share one PostgreSQL.
 *
 * Node only (worker threads).
 */
import "server-only";
import { randomBytes } from "node:crypto";
import { and, eq, inArray } from "drizzle-orm";
import type { Db } from "@/db/client";
import { sweepResults, sweeps } from "@/db/schema";
import { PLAN_DEFAULTS } from "@/lib/quotas/plan";
import { applyRunLimits } from "@/lib/quotas/enforce";
import type { ChunkOutcome, ChunkTask } from "@/lib/sweeps/chunk-task";
import { PackedView, mergePacked, verdictTally } from "@/lib/sweeps/packed";
import type { ChunkPool } from "@/lib/sweeps/pool";
import { discardChunk, recordFailure } from "./failures";
import { Keyer } from "./keying";
import { Leases } from "./leases";
import { Pacing, Wakeup } from "./pacing";
import { RUNNER_KEY } from "./poke";
import { recordLanded } from "./recording";
import { dropBlobFile, putBlob, readBlob, removeOrphanBlobs } from "./result-store";
import { claimChunks, type ClaimedChunk } from "./sql-functions";
import { SweepInfoCache } from "./sweep-info";

export { MAX_CHUNK_ATTEMPTS } from "./failures";

export interface RunnerOptions {
  db: Db;
  pool: ChunkPool;
  /**
   * Chunks this runner holds at once (running, or ready for a thread); default four per pool
   * thread. New chunks are claimed half a window at a time, so one claim statement serves
   * several chunks.
   */
  concurrency?: number;
  /** Lease length (ms); renewed every third of it while a chunk runs. */
  leaseMs?: number;
  /** Idle wait between looks at the queue (ms). */
  pollMs?: number;
  /** Treat running chunks of other owners as dead at start (one process per database, as with PGlite). */
  reclaimForeignAtStart?: boolean;
  ownerId?: string;
  /** Called after each chunk this runner records, with whether that finished its sweep (benchmarks, tests, push updates). */
  onRecorded?: (sweepId: string, sweepFinished: boolean) => void;
  /**
   * Called after each claim statement with the sweeps of the chunks it returned (none when the queue
   * had nothing eligible): lets a test see that the runner looked at the queue, in order of events
   * rather than by waiting a fixed time.
   */
  onClaimed?: (sweepIds: string[]) => void;
}

/**
 * The runner's life: "running" claims chunks; "stopped" claims none, but chunks that land are still
 * recorded; "crashed" drops whatever lands and leaves its leases to lapse (or hands them back).
 */
type Mode = "running" | "stopped" | "crashed";

interface InFlight {
  chunk: ClaimedChunk;
  abort: AbortController;
}

export class QueueRunner {
  readonly ownerId: string;
  private readonly db: Db;
  private readonly pool: ChunkPool;
  private readonly concurrency: number;
  private readonly claimBatch: number;
  private readonly options: RunnerOptions;
  private readonly reclaimForeignAtStart: boolean;
  private readonly leases: Leases;
  private readonly pacing: Pacing;
  private readonly wakeup = new Wakeup();
  private readonly sweepInfo: SweepInfoCache;
  private readonly keyer: Keyer;
  private mode: Mode = "stopped";
  /** Chunks held, by chunk id. */
  private readonly inFlight = new Map<number, InFlight>();
  /** Held chunks still waiting for a thread or running on one (not yet landed). */
  private unlanded = 0;
  /** Work that still writes when it settles: chunks landing, a run being keyed. */
  private readonly landing = new Set<Promise<void>>();
  private loopDone: Promise<void> = Promise.resolve();

  constructor(options: RunnerOptions) {
    this.options = options;
    this.db = options.db;
    this.pool = options.pool;
    this.concurrency = options.concurrency ?? options.pool.threads * 4;
    this.claimBatch = Math.max(1, Math.floor(this.concurrency / 2));
    this.reclaimForeignAtStart = options.reclaimForeignAtStart ?? false;
    this.ownerId = options.ownerId ?? `run_${process.pid}_${randomBytes(6).toString("hex")}`;
    this.leases = new Leases(this.db, this.ownerId, options.leaseMs ?? 60_000);
    this.pacing = new Pacing(options.pollMs ?? 250);
    this.sweepInfo = new SweepInfoCache(this.db);
    this.keyer = new Keyer(this.db, this.pool, this.sweepInfo, () => this.crashed, logError);
  }

  async start(): Promise<void> {
    if (this.mode === "running") return;
    this.mode = "running";
    await this.leases.reclaimLapsed(this.reclaimForeignAtStart);
    this.pacing.leasesChecked();
    // Result files left by a process that died between writing a blob and recording it.
    void removeOrphanBlobs(this.db).catch(logError);
    this.leases.startRenewing(() => (this.crashed ? [] : [...this.inFlight.keys()]), logError);
    this.loopDone = this.loop();
  }

  /** Nudge the loop (after a submit) instead of waiting for the next poll. */
  poke(): void {
    this.pacing.undrain();
    this.wakeup.ring();
  }

  /** Stop claiming, let running chunks land and be written, then return. */
  async stop(): Promise<void> {
    if (this.mode === "running") this.mode = "stopped";
    this.poke();
    await this.loopDone;
    await Promise.allSettled([...this.landing]);
    this.leases.stopRenewing();
  }

  /** Stop abruptly as a crashed process would: nothing more is written, leases stay held until they lapse. */
  async crash(): Promise<void> {
    this.mode = "crashed";
    this.leases.stopRenewing();
    for (const flight of this.inFlight.values()) flight.abort.abort("runner crashed");
    this.poke();
    await this.loopDone;
    await Promise.allSettled([...this.landing]);
  }

  /** Crashed (or shut down past its grace): whatever lands now is dropped. */
  private get crashed(): boolean {
    return this.mode === "crashed";
  }

  /** Whether the runner is claiming chunks (started and not stopped). */
  get isRunning(): boolean {
    return this.mode === "running";
  }

  /** Recorded runs this runner has still to key (waiting, or being keyed now). */
  get runsToKey(): number {
    return this.keyer.pending;
  }

  /** Chunks this runner holds a lease on right now. */
  get chunksHeld(): number {
    return this.inFlight.size;
  }

  /**
   * Graceful shutdown (a worker process on SIGTERM): stop claiming; running chunks get `graceMs` to
   * land and be written as usual, their leases renewed meanwhile. Chunks still held after that go
   * straight back to the queue (lease released, the attempt not counted) for another runner, and
   * their results are dropped should they land later. Returns how many chunks were handed back.
   */
  async shutdown(graceMs: number): Promise<{ returned: number }> {
    if (this.mode === "running") this.mode = "stopped";
    this.poke();
    await this.loopDone;
    let timer: NodeJS.Timeout | undefined;
    const allLanded = await Promise.race([
      Promise.allSettled([...this.landing]).then(() => true),
      new Promise<boolean>((resolve) => (timer = setTimeout(() => resolve(false), Math.max(0, graceMs)))),
    ]);
    clearTimeout(timer);
    this.leases.stopRenewing();
    if (allLanded) return { returned: 0 };
    this.mode = "crashed";
    const ids = [...this.inFlight.keys()];
    for (const flight of this.inFlight.values()) flight.abort.abort("runner shutting down");
    return { returned: await this.leases.release(ids) };
  }

  private async loop(): Promise<void> {
    while (this.mode === "running") {
      this.wakeup.clear();
      try {
        if (this.pacing.housekeepingDue()) {
          await this.dropCancelled();
          if (this.pacing.leaseCheckDue()) await this.leases.reclaimLapsed(false);
        }
        // Quotas, balance and suspension (lib/quotas/enforce.ts): pause at a chunk boundary with the
        // reason, resume when the cause is gone (a top-up, a quota raise, a lifted suspension).
        if (this.pacing.limitsDue()) await applyRunLimits(this.db);
        const free = this.concurrency - this.inFlight.size;
        // Claim once half the window is free, or at once if a thread could be left without work.
        const everyThreadFed = this.unlanded >= this.pool.threads;
        if (this.mode === "running" && free > 0 && this.pacing.mayClaim(everyThreadFed) && (free >= this.claimBatch || this.inFlight.size < this.pool.threads * 2)) {
          const claimed = await claimChunks(this.db, {
            owner: this.ownerId,
            leaseMs: this.leases.leaseMs,
            limit: free,
            defaultMaxRunningSweeps: PLAN_DEFAULTS.maxRunningSweeps,
            // Sweeps of held chunks: their specs are known, the claim need not send them again.
            knownSweeps: [...new Set([...this.inFlight.values()].map((f) => f.chunk.sweepId))],
          });
          this.options.onClaimed?.(claimed.map((chunk) => chunk.sweepId));
          if (claimed.length < free) this.pacing.drained();
          for (const chunk of claimed) {
            if (chunk.spec) this.sweepInfo.put(chunk.sweepId, { studioId: chunk.studioId, spec: chunk.spec, hasCached: chunk.cachedCells > 0 });
          }
          for (const chunk of claimed) this.launch(chunk);
        }
        if (this.mode === "running" && this.inFlight.size === 0 && this.keyer.ready) this.keyNext();
      } catch (error) {
        logError(error);
      }
      if (this.wakeup.pending || this.mode !== "running") continue;
      await this.wakeup.sleep(this.pacing.sleepMs);
    }
  }

  /** Chunks of sweeps cancelled meanwhile: drop them if they still wait for a thread. */
  private async dropCancelled(): Promise<void> {
    if (this.inFlight.size === 0) return;
    const sweepIds = [...new Set([...this.inFlight.values()].map((f) => f.chunk.sweepId))];
    const rows = await this.db.select({ id: sweeps.id }).from(sweeps).where(and(inArray(sweeps.id, sweepIds), inArray(sweeps.status, ["cancelled", "failed"])));
    const stopped = new Set(rows.map((r) => r.id));
    for (const flight of this.inFlight.values()) if (stopped.has(flight.chunk.sweepId)) flight.abort.abort("sweep stopped");
  }

  /** Track work that writes when it settles; the loop looks again once it has. */
  private track(work: Promise<void>, after?: () => void): void {
    const tracked: Promise<void> = work.finally(() => {
      after?.();
      this.landing.delete(tracked);
      this.wakeup.ring();
    });
    this.landing.add(tracked);
  }

  private launch(chunk: ClaimedChunk): void {
    const abort = new AbortController();
    this.inFlight.set(chunk.id, { chunk, abort });
    this.unlanded++;
    let unlanded = true;
    // The loop looks again once the chunk is recorded (track rings it then), not as its run settles:
    // a claim then would hold the database while the landed chunk waits to be recorded.
    const land = () => {
      if (!unlanded) return;
      unlanded = false;
      this.unlanded--;
    };
    this.track(this.runChunk(chunk, abort.signal, land).catch(logError), () => {
      land();
      this.inFlight.delete(chunk.id);
    });
  }

  /** Key the next recorded run on the pool (the pool is idle: no chunk is held), then look again. */
  private keyNext(): void {
    const keyed = this.keyer.keyNext();
    if (keyed) this.track(keyed);
  }

  /** `land` is called once the chunk's run on the pool has settled (before it is recorded). */
  private async runChunk(chunk: ClaimedChunk, signal: AbortSignal, land: () => void): Promise<void> {
    const info = await this.sweepInfo.get(chunk.sweepId);
    if (!info) return;
    // Cells served from the cache at submit are already stored (a partial row): run the others.
    let partial: { view: PackedView; location: string | null } | null = null;
    if (info.hasCached) {
      const [row] = await this.db
        .select()
        .from(sweepResults)
        .where(and(eq(sweepResults.sweepId, chunk.sweepId), eq(sweepResults.chunkIndex, chunk.chunkIndex)));
      if (row) partial = { view: new PackedView(await readBlob(row)), location: row.location };
    }
    const task: ChunkTask = {
      kind: "range",
      chunkIndex: chunk.chunkIndex,
      spec: info.spec,
      firstCell: chunk.firstCell,
      cellCount: chunk.cellCount,
      skip: partial ? Int32Array.from(partial.view.indices) : undefined,
      // Keys for the result cache are added while the pool is idle (./keying.ts), not on the sweep's time.
      keys: false,
    };
    let outcome: ChunkOutcome;
    try {
      outcome = await this.pool.run(task, { signal }).finally(land);
    } catch (error) {
      if (this.crashed || signal.aborted) {
        if (!this.crashed) await discardChunk(this.db, this.ownerId, chunk.id, true);
        return;
      }
      await recordFailure(this.db, this.ownerId, chunk, error);
      return;
    }
    if (this.crashed) return;
    const fresh = new PackedView(outcome.packed);
    const packed = partial ? mergePacked(partial.view, fresh) : outcome.packed;
    const blob = await putBlob(chunk.sweepId, chunk.chunkIndex, `a${chunk.attempts}`, packed);
    if (this.crashed) return;
    const landed = await recordLanded(this.db, this.ownerId, info, chunk, outcome, verdictTally(fresh), blob, () => this.pacing.landedNearLimit());
    if (landed.recorded) this.options.onRecorded?.(chunk.sweepId, landed.finished);
    if (landed.recorded && partial && partial.location !== blob.location) await dropBlobFile(partial.location).catch(logError);
    // Not recorded (the sweep was stopped, or the lease went to another runner): nothing points at this file.
    if (!landed.recorded) await dropBlobFile(blob.location).catch(logError);
    else this.keyer.add({ sweepId: chunk.sweepId, chunkIndex: chunk.chunkIndex });
  }
}

function logError(error: unknown): void {
  console.error("[kickdrift] queue runner:", error);
}

type RunnerHolder = { [RUNNER_KEY]?: QueueRunner };

/** The server process's runner, created and started once (KICKDRIFT_RUNNER=off skips it). */
export async function startProcessRunner(): Promise<QueueRunner | null> {
  if (process.env.KICKDRIFT_RUNNER === "off") return null;
  const holder = globalThis as RunnerHolder;
  if (holder[RUNNER_KEY]) return holder[RUNNER_KEY];
  const [{ getDb }, { getChunkPool }] = await Promise.all([import("@/db/client"), import("@/lib/sweeps/pool")]);
  const runner = new QueueRunner({ db: await getDb(), pool: getChunkPool(), reclaimForeignAtStart: !process.env.DATABASE_URL });
  holder[RUNNER_KEY] = runner;
  await runner.start();
  return runner;
}
