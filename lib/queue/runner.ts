/**
 * The queue runner: claims queued chunks with a lease, runs them on the worker-thread pool, and
 * for each finished chunk records in ONE transaction its results row (the packed blob,
 * lib/queue/result-store.ts), the chunk state, the sweep's running counters (cells, chunks,
 * verdicts, compute) and the ledger debit `usage:{sweepId}:{chunkIndex}` (idempotent, so a chunk
 * run twice after a lost lease is billed once). A chunk far from every limit (balance well above
 * the low-balance mark, usage well under the monthly cap) is debited inside the one recording
 * statement; near a limit the debit goes through lib/billing/usage.ts (prepaid first, overage
 * metered through the outbox, nothing billed past a cap) and the cap alerts are checked.
 *
 * Limits (lib/quotas/enforce.ts) pause and resume sweeps at chunk boundaries; claims share the
 * pool out between studios (fair share) and start a queued sweep only while its studio runs fewer
 * sweeps than its limit.
 *
 * The main thread does as little per cell as it can (the workers pack the results; the
 * main thread stores one blob per chunk), because on a machine whose cores all run workers any
 * main-thread work adds to a sweep's wall time. It holds twice as many chunks as the pool has
 * threads, so each thread starts its next chunk while the previous one is being stored.
 *
 * Leases: a claimed chunk carries its runner's id and an expiry that the runner renews while the
 * chunk runs. A chunk whose lease lapsed (its runner died) goes back to the queue. Claims use
 * `FOR UPDATE SKIP LOCKED`, so several processes can share one PostgreSQL.
 *
 * Result-cache keys: chunks run without scenario keys (keying costs up to a third of a cheap cell's
 * simulation); each recorded run is keyed afterwards on the pool while this runner holds no chunk
 * (keyStored), and a submit that meets a run not keyed yet keys it itself.
 *
 * Node only (worker threads).
 */
import { randomBytes } from "node:crypto";
import { and, eq, inArray, sql } from "drizzle-orm";
import type { Db, DbOrTx } from "@/db/client";
import { sweepChunks, sweepResults, sweeps, type SweepChunk } from "@/db/schema";
import { recordChunkUsage } from "@/lib/billing/usage";
import { LOW_BALANCE_MS } from "@/lib/billing/packs";
import { usageKey } from "@/lib/ledger/ledger";
import { monthOf, PLAN_DEFAULTS } from "@/lib/quotas/plan";
import { applyRunLimits, CAP_ALERT_THRESHOLDS, sendCapAlerts } from "@/lib/quotas/enforce";
import { pokeOutbox } from "@/lib/outbox/process";
import { VERDICTS } from "@/lib/physics/types";
import type { ChunkOutcome, ChunkTask } from "@/lib/sweeps/chunk-task";
import { PackedView, mergePacked, verdictTally } from "@/lib/sweeps/packed";
import type { ChunkPool } from "@/lib/sweeps/pool";
import type { SweepSpec } from "@/lib/sweeps/spec";
import { WORK_UNITS_PER_BILLED_MS } from "@/lib/sweeps/metering";
import { RUNNER_KEY } from "./poke";
import { dropBlobFile, putBlob, readBlob, removeOrphanBlobs } from "./result-store";

/** Recorded runs waiting for their keys, at most (beyond it, submit keys a run itself when it needs it). */
const MAX_TO_KEY = 100_000;
/** Attempts per chunk: the first run plus two retries. */
export const MAX_CHUNK_ATTEMPTS = 3;
/**
 * Longest wait between two checks of the run limits while chunks land far from every limit (ms):
 * a top-up, a raise or a suspension takes effect within it. A chunk landing near a limit triggers
 * a check before the next claim. (One check reads every studio's standing: ~50 ms of main-thread
 * work on PGlite, which at 250 ms cost a 65,536-cell sweep a quarter of its wall time.)
 */
const LIMITS_EVERY_MS = 1_000;

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

interface InFlight {
  chunk: SweepChunk;
  abort: AbortController;
}

export class QueueRunner {
  readonly ownerId: string;
  private readonly db: Db;
  private readonly pool: ChunkPool;
  private readonly concurrency: number;
  private readonly claimBatch: number;
  private readonly onRecorded?: (sweepId: string, sweepFinished: boolean) => void;
  private readonly onClaimed?: (sweepIds: string[]) => void;
  private readonly leaseMs: number;
  private readonly pollMs: number;
  private readonly reclaimForeignAtStart: boolean;
  private readonly inFlight = new Map<number, InFlight>();
  private running = false;
  /** Set by crash(): results that land afterwards are dropped, leases are left as they are. */
  private crashed = false;
  private loopDone: Promise<void> = Promise.resolve();
  private wake: (() => void) | null = null;
  private renewTimer: NodeJS.Timeout | null = null;
  private landing = new Set<Promise<void>>();
  private poked = false;
  private nextHousekeeping = 0;
  private nextLeaseCheck = 0;
  /** What a chunk needs of its sweep (the spec never changes once submitted). */
  private readonly sweepInfo = new Map<string, Promise<SweepInfo | null>>();
  private limitsCheckedAt = 0;
  /**
   * The last claim found fewer chunks than it asked for: until a poke (a submit, a resume) or the
   * next poll, a landing chunk does not trigger another claim that would find nothing.
   */
  private drainedUntil = 0;
  /** Recorded runs still without scenario keys, keyed one at a time while no chunk is held. */
  private readonly toKey: { sweepId: string; chunkIndex: number }[] = [];
  private keying = false;
  /** A chunk landed near a limit (its debit went the careful way): check the limits before the next claim. */
  private nearLimit = true;

  constructor(options: RunnerOptions) {
    this.db = options.db;
    this.pool = options.pool;
    this.concurrency = options.concurrency ?? options.pool.threads * 4;
    this.claimBatch = Math.max(1, Math.floor(this.concurrency / 2));
    this.onRecorded = options.onRecorded;
    this.onClaimed = options.onClaimed;
    this.leaseMs = options.leaseMs ?? 60_000;
    this.pollMs = options.pollMs ?? 250;
    this.reclaimForeignAtStart = options.reclaimForeignAtStart ?? false;
    this.ownerId = options.ownerId ?? `run_${process.pid}_${randomBytes(6).toString("hex")}`;
  }

  async start(): Promise<void> {
    if (this.running) return;
    this.running = true;
    this.crashed = false;
    await this.reclaimLapsed(this.reclaimForeignAtStart);
    // Result files left by a process that died between writing a blob and recording it.
    void removeOrphanBlobs(this.db).catch(logError);
    this.renewTimer = setInterval(() => void this.renewLeases().catch(logError), Math.max(50, Math.floor(this.leaseMs / 3)));
    this.renewTimer.unref?.();
    this.loopDone = this.loop();
  }

  /** Nudge the loop (after a submit) instead of waiting for the next poll. */
  poke(): void {
    this.drainedUntil = 0;
    this.wakeLoop();
  }

  /** Run the loop now (a chunk landed): it claims again only if the queue was not found drained. */
  private wakeLoop(): void {
    this.poked = true;
    this.wake?.();
  }

  /** Stop claiming, let running chunks land and be written, then return. */
  async stop(): Promise<void> {
    this.running = false;
    this.poke();
    await this.loopDone;
    await Promise.allSettled([...this.landing]);
    if (this.renewTimer) clearInterval(this.renewTimer);
  }

  /** Stop abruptly as a crashed process would: nothing more is written, leases stay held until they lapse. */
  async crash(): Promise<void> {
    this.crashed = true;
    this.running = false;
    if (this.renewTimer) clearInterval(this.renewTimer);
    for (const flight of this.inFlight.values()) flight.abort.abort("runner crashed");
    this.poke();
    await this.loopDone;
    await Promise.allSettled([...this.landing]);
  }

  /** Whether the runner is claiming chunks (started and not stopped). */
  get isRunning(): boolean {
    return this.running;
  }

  /** Recorded runs this runner has still to key (waiting, or being keyed now). */
  get runsToKey(): number {
    return this.toKey.length + (this.keying ? 1 : 0);
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
    this.running = false;
    this.poke();
    await this.loopDone;
    let timer: NodeJS.Timeout | undefined;
    const allLanded = await Promise.race([
      Promise.allSettled([...this.landing]).then(() => true),
      new Promise<boolean>((resolve) => (timer = setTimeout(() => resolve(false), Math.max(0, graceMs)))),
    ]);
    clearTimeout(timer);
    if (this.renewTimer) clearInterval(this.renewTimer);
    if (allLanded) return { returned: 0 };
    this.crashed = true;
    const ids = [...this.inFlight.keys()];
    for (const flight of this.inFlight.values()) flight.abort.abort("runner shutting down");
    if (ids.length === 0) return { returned: 0 };
    const result = await this.db.execute(sql`
      update sweep_chunks set status = 'queued', lease_owner = null, lease_expires_at = null, attempts = greatest(attempts - 1, 0)
      where lease_owner = ${this.ownerId} and status = 'running' and id in (${sql.join(ids.map((id) => sql`${id}`), sql`, `)})
      returning id`);
    return { returned: (result as unknown as { rows: unknown[] }).rows.length };
  }

  private async loop(): Promise<void> {
    while (this.running) {
      this.poked = false;
      try {
        // Cancel checks run once per poll interval, lease checks at most once a second: not after
        // every chunk (each statement is main-thread work). The run limits are checked before the
        // next claim when a chunk landed near a limit, else every LIMITS_EVERY_MS.
        if (Date.now() >= this.nextHousekeeping) {
          this.nextHousekeeping = Date.now() + this.pollMs;
          await this.dropCancelled();
          if (Date.now() >= this.nextLeaseCheck) {
            this.nextLeaseCheck = Date.now() + Math.max(this.pollMs, 1000);
            await this.reclaimLapsed(false);
          }
        }
        await this.applyLimits();
        const free = this.concurrency - this.inFlight.size;
        // Claim once half the window is free, or at once if a thread could be left without work.
        if (this.running && free > 0 && Date.now() >= this.drainedUntil && (free >= this.claimBatch || this.inFlight.size < this.pool.threads * 2)) {
          const claimed = await this.claim(free);
          this.onClaimed?.(claimed.map((chunk) => chunk.sweepId));
          if (claimed.length < free) this.drainedUntil = Date.now() + this.pollMs;
          for (const chunk of claimed) this.launch(chunk);
        }
        if (this.running && this.inFlight.size === 0 && this.toKey.length > 0 && !this.keying) this.keyNext();
      } catch (error) {
        logError(error);
      }
      if (this.poked || !this.running) continue;
      await new Promise<void>((resolve) => {
        const timer = setTimeout(resolve, Math.max(1, Math.min(this.pollMs, this.nextHousekeeping - Date.now())));
        this.wake = () => {
          clearTimeout(timer);
          resolve();
        };
      });
      this.wake = null;
    }
  }

  /** Running chunks whose lease lapsed (or, at start, that belong to another owner) go back to the queue. */
  private async reclaimLapsed(foreignToo: boolean): Promise<void> {
    await this.db.execute(sql`
      update sweep_chunks set status = 'queued', lease_owner = null, lease_expires_at = null
      where status = 'running' and (lease_expires_at < now() ${foreignToo ? sql`or lease_owner is distinct from ${this.ownerId}` : sql``})`);
  }

  /**
   * Quotas, balance and suspension (lib/quotas/enforce.ts): pause at a chunk boundary with the
   * reason, resume when the cause is gone (a top-up, a quota raise, a lifted suspension).
   */
  private async applyLimits(): Promise<void> {
    if (!this.nearLimit && Date.now() - this.limitsCheckedAt < LIMITS_EVERY_MS) return;
    this.nearLimit = false;
    this.limitsCheckedAt = Date.now();
    await applyRunLimits(this.db);
  }

  /** Chunks of sweeps cancelled meanwhile: drop them if they still wait for a thread. */
  private async dropCancelled(): Promise<void> {
    if (this.inFlight.size === 0) return;
    const sweepIds = [...new Set([...this.inFlight.values()].map((f) => f.chunk.sweepId))];
    const rows = await this.db.select({ id: sweeps.id }).from(sweeps).where(and(inArray(sweeps.id, sweepIds), inArray(sweeps.status, ["cancelled", "failed"])));
    const stopped = new Set(rows.map((r) => r.id));
    for (const flight of this.inFlight.values()) if (stopped.has(flight.chunk.sweepId)) flight.abort.abort("sweep stopped");
  }

  /**
   * Claim up to `limit` queued chunks in one statement. Fair share: chunks are dealt out between
   * studios in turn (each studio's k-th chunk before anyone's (k+1)-th), the studio with the fewest
   * chunks running and then the one served longest ago first. A queued sweep is eligible only while
   * its studio runs fewer sweeps than maxRunningSweeps; the same statement starts it, the limit re-checked
   * under a lock on the studio row (a refused sweep's chunks go back to the queue and are not returned).
   */
  private async claim(limit: number): Promise<SweepChunk[]> {
    // The statement is the function kickdrift_claim_chunks (drizzle/0009_queue_functions.sql):
    // planned once per connection instead of at every claim.
    const result = await this.db.execute(sql`
      select * from kickdrift_claim_chunks(${this.ownerId}::text, ${this.leaseMs / 1000}::double precision, ${limit}::integer, ${PLAN_DEFAULTS.maxRunningSweeps}::integer)`);
    const rows = (
      result as unknown as {
        rows: { id: number; sweep_id: string; chunk_index: number; first_cell: number; cell_count: number; attempts: number; sweep_status: string }[];
      }
    ).rows;
    const chunks = rows.map((row) => ({
      id: Number(row.id),
      sweepId: row.sweep_id,
      chunkIndex: Number(row.chunk_index),
      firstCell: Number(row.first_cell),
      cellCount: Number(row.cell_count),
      status: "running" as const,
      leaseOwner: this.ownerId,
      leaseExpiresAt: null,
      attempts: Number(row.attempts),
      lastError: null,
      computeMs: 0,
      ceilingMs: 0,
      workUnits: 0,
      wallMs: 0,
    }));
    return chunks;
  }

  private async renewLeases(): Promise<void> {
    if (this.crashed || this.inFlight.size === 0) return;
    const ids = [...this.inFlight.keys()];
    await this.db.execute(sql`
      update sweep_chunks set lease_expires_at = now() + make_interval(secs => ${this.leaseMs / 1000})
      where lease_owner = ${this.ownerId} and status = 'running' and id in (${sql.join(ids.map((id) => sql`${id}`), sql`, `)})`);
  }

  private launch(chunk: SweepChunk): void {
    const abort = new AbortController();
    this.inFlight.set(chunk.id, { chunk, abort });
    const landed = this.runChunk(chunk, abort.signal)
      .catch(logError)
      .finally(() => {
        this.inFlight.delete(chunk.id);
        this.landing.delete(landed);
        this.wakeLoop();
      });
    this.landing.add(landed);
  }

  /** The sweep's info, read once per sweep: chunks launched together share one read. */
  private infoOf(sweepId: string): Promise<SweepInfo | null> {
    const known = this.sweepInfo.get(sweepId);
    if (known) return known;
    const reading = this.readInfo(sweepId);
    if (this.sweepInfo.size > 1000) this.sweepInfo.clear();
    this.sweepInfo.set(sweepId, reading);
    // A failed or empty read is not kept: the next chunk of that sweep reads again.
    reading.then((info) => info ?? this.sweepInfo.delete(sweepId), () => this.sweepInfo.delete(sweepId));
    return reading;
  }

  private async readInfo(sweepId: string): Promise<SweepInfo | null> {
    const [row] = await this.db
      .select({ studioId: sweeps.studioId, spec: sweeps.spec, cachedCells: sweeps.cachedCells })
      .from(sweeps)
      .where(eq(sweeps.id, sweepId));
    if (!row) return null;
    return { studioId: row.studioId, spec: row.spec, hasCached: row.cachedCells > 0 };
  }

  /** Key the next recorded run on the pool (the pool is idle: no chunk is held), then look again. */
  private keyNext(): void {
    const item = this.toKey.shift();
    if (!item) return;
    this.keying = true;
    const keyed = this.keyStored(item)
      .catch(logError)
      .finally(() => {
        this.keying = false;
        this.landing.delete(keyed);
        this.wakeLoop();
      });
    this.landing.add(keyed);
  }

  /**
   * Rewrite a stored run with every cell's scenario key, so later quotes and submits of the studio
   * find its cells without keying them (lib/queue/submit.ts keys a run not keyed yet itself). The
   * row moves to the new blob only if it has not changed meanwhile (its change cursor, which stays
   * as it is: the cells are the same); the old file goes a minute later, as an export may be reading it.
   */
  private async keyStored(item: { sweepId: string; chunkIndex: number }): Promise<void> {
    const info = await this.infoOf(item.sweepId);
    if (!info) return;
    const [row] = await this.db
      .select()
      .from(sweepResults)
      .where(and(eq(sweepResults.sweepId, item.sweepId), eq(sweepResults.chunkIndex, item.chunkIndex)));
    if (!row || !row.complete) return;
    const stored = await readBlob(row);
    if (new PackedView(stored).hasKeys) return;
    const outcome = await this.pool.run({ kind: "keys", chunkIndex: item.chunkIndex, spec: info.spec, packed: stored });
    if (this.crashed) return;
    const blob = await putBlob(item.sweepId, item.chunkIndex, `k${row.recordedSeq}`, outcome.packed);
    const moved = await this.db
      .update(sweepResults)
      .set({ location: blob.location, bytes: blob.bytes, data: blob.data })
      .where(and(eq(sweepResults.id, row.id), eq(sweepResults.recordedSeq, row.recordedSeq)))
      .returning({ id: sweepResults.id });
    if (moved.length === 0) {
      await dropBlobFile(blob.location);
      return;
    }
    const old = row.location;
    if (old && old !== blob.location) setTimeout(() => void dropBlobFile(old).catch(logError), 60_000).unref?.();
  }

  private async runChunk(chunk: SweepChunk, signal: AbortSignal): Promise<void> {
    const info = await this.infoOf(chunk.sweepId);
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
      // Keys for the result cache are added while the pool is idle (keyStored), not on the sweep's time.
      keys: false,
    };
    let outcome: ChunkOutcome;
    try {
      outcome = await this.pool.run(task, { signal });
    } catch (error) {
      if (this.crashed || signal.aborted) {
        if (!this.crashed) await this.discard(chunk, true);
        return;
      }
      await this.recordFailure(chunk, error);
      return;
    }
    if (this.crashed) return;
    const fresh = new PackedView(outcome.packed);
    const packed = partial ? mergePacked(partial.view, fresh) : outcome.packed;
    const blob = await putBlob(chunk.sweepId, chunk.chunkIndex, `a${chunk.attempts}`, packed);
    if (this.crashed) return;
    const recorded = await this.recordOutcome(info, chunk, outcome, verdictTally(fresh), blob);
    if (recorded && partial && partial.location !== blob.location) await dropBlobFile(partial.location).catch(logError);
    // Not recorded (the sweep was stopped, or the lease went to another runner): nothing points at this file.
    if (!recorded) await dropBlobFile(blob.location).catch(logError);
    else if (this.toKey.length < MAX_TO_KEY) this.toKey.push({ sweepId: chunk.sweepId, chunkIndex: chunk.chunkIndex });
  }

  /** The chunk's sweep was stopped while it waited: mark it cancelled, bill nothing. */
  private async discard(chunk: SweepChunk, stoppedOnThread = false): Promise<void> {
    await this.db
      .update(sweepChunks)
      .set({ status: "cancelled", leaseOwner: null, leaseExpiresAt: null, ...(stoppedOnThread ? { lastError: "stopped on its thread: the sweep was stopped" } : {}) })
      .where(and(eq(sweepChunks.id, chunk.id), eq(sweepChunks.leaseOwner, this.ownerId), eq(sweepChunks.status, "running")));
  }

  private async recordFailure(chunk: SweepChunk, error: unknown): Promise<void> {
    const message = error instanceof Error ? error.message : String(error);
    await this.db.transaction(async (tx) => {
      const [current] = await tx.select().from(sweepChunks).where(eq(sweepChunks.id, chunk.id)).for("update");
      if (!current || current.status !== "running" || current.leaseOwner !== this.ownerId) return;
      if (current.attempts < MAX_CHUNK_ATTEMPTS) {
        await tx.update(sweepChunks).set({ status: "queued", leaseOwner: null, leaseExpiresAt: null, lastError: message }).where(eq(sweepChunks.id, chunk.id));
        return;
      }
      await tx.update(sweepChunks).set({ status: "failed", leaseOwner: null, leaseExpiresAt: null, lastError: message }).where(eq(sweepChunks.id, chunk.id));
      await tx
        .update(sweepChunks)
        .set({ status: "cancelled" })
        .where(and(eq(sweepChunks.sweepId, chunk.sweepId), eq(sweepChunks.status, "queued")));
      await tx
        .update(sweeps)
        .set({ status: "failed", reason: `chunk ${chunk.chunkIndex} failed ${MAX_CHUNK_ATTEMPTS} times: ${message}`, finishedAt: new Date() })
        .where(and(eq(sweeps.id, chunk.sweepId), inArray(sweeps.status, ["queued", "running", "paused"])));
    });
  }

  /**
   * Record a finished chunk atomically: lock the studio (the one debit writer per studio at a time,
   * as lib/billing/usage.ts does) and the sweep, mark the chunk done (only if this runner still
   * holds it and the sweep was not stopped), upsert its results row, add the chunk to the sweep's
   * counters and insert its debit. Far from every limit that is one statement (its own
   * transaction); near a limit the chunk is recorded in a transaction whose debit goes through
   * recordChunkUsage, and the cap alerts are checked after it. Returns whether it was recorded.
   */
  private async recordOutcome(
    info: SweepInfo,
    chunk: SweepChunk,
    outcome: ChunkOutcome,
    tallyByCode: number[],
    blob: { bytes: number; location: string | null; data: Uint8Array | null },
  ): Promise<boolean> {
    const cellsInBlob = chunk.cellCount; // a recorded chunk holds all its cells (cached ones merged in)
    const tally = JSON.stringify(Object.fromEntries(VERDICTS.map((verdict, code) => [verdict, tallyByCode[code]])));
    const memo = `Sweep ${chunk.sweepId} chunk ${chunk.chunkIndex} (${outcome.cellCount} cells)`;
    const month = monthOf(new Date());
    const firstAlertPercent = Math.min(...CAP_ALERT_THRESHOLDS);
    const call = (db: DbOrTx, onlyIfEasy: boolean) =>
      db.execute(sql`
        select * from kickdrift_record_chunk(
          ${this.ownerId}::text, ${chunk.id}::integer, ${chunk.sweepId}::text, ${info.studioId}::text,
          ${cellsInBlob}::integer, ${outcome.cellCount}::integer, ${outcome.workUnits}::bigint, ${outcome.wallMs}::bigint, ${WORK_UNITS_PER_BILLED_MS}::bigint,
          ${blob.bytes}::integer, ${blob.location}::text, ${blob.data}::bytea, ${tally}::jsonb,
          ${usageKey(chunk.sweepId, chunk.chunkIndex)}::text, ${memo}::text, ${month.start.toISOString()}::timestamptz, ${month.end.toISOString()}::timestamptz,
          ${LOW_BALANCE_MS}::bigint, ${PLAN_DEFAULTS.monthlyComputeMs}::bigint, ${firstAlertPercent}::integer, ${onlyIfEasy}::boolean)`)
        .then((result) => (result as unknown as { rows: RecordRow[] }).rows[0]);
    // Far from every limit (the usual case) the chunk is recorded by one statement on its own: the
    // function kickdrift_record_chunk (drizzle/0009_queue_functions.sql), planned once per
    // connection, which locks the studio and the sweep and does all of the above.
    const fast = await call(this.db, true);
    let landed: { recorded: boolean; sweepStatus: string | null; newStatus: string | null; careful: boolean };
    if (Number(fast?.recorded ?? 0) > 0) {
      landed = { recorded: true, sweepStatus: fast.sweep_status, newStatus: fast.new_status, careful: false };
    } else if (fast && Number(fast.easy) === 0 && fast.sweep_status !== "cancelled" && fast.sweep_status !== "failed") {
      // Near a limit: record it without the in-place debit and bill it through lib/billing/usage.ts
      // (prepaid first, overage metered through the outbox, nothing past a cap), in one transaction.
      landed = await this.db.transaction(async (tx) => {
        const row = await call(tx, false);
        if (Number(row?.recorded ?? 0) === 0) return { recorded: false, sweepStatus: row?.sweep_status ?? null, newStatus: null, careful: false };
        const careful = Number(row.easy) === 0;
        if (careful) {
          // The debit kickdrift_record_chunk worked out from the chunk's work units (its wall time for a sweep metered by wall clock).
          const billedMs = Number(row.billed_ms);
          const usage = await recordChunkUsage(tx, { studioId: info.studioId, sweepId: chunk.sweepId, chunkIndex: chunk.chunkIndex, computeMs: billedMs, memo });
          if (usage.billed) await tx.update(sweeps).set({ computeMs: sql`${sweeps.computeMs} + ${billedMs}::int` }).where(eq(sweeps.id, chunk.sweepId));
        }
        return { recorded: true, sweepStatus: row.sweep_status, newStatus: row.new_status, careful };
      });
    } else {
      landed = { recorded: false, sweepStatus: fast?.sweep_status ?? null, newStatus: null, careful: false };
    }
    if (landed.recorded) {
      if (landed.careful) {
        // Near a limit: the chunk may have crossed 80 % or 100 % of the monthly cap, queued a meter
        // event or a low-balance mail; check the limits before the next claim.
        this.nearLimit = true;
        await sendCapAlerts(this.db, info.studioId);
        pokeOutbox();
      }
      this.onRecorded?.(chunk.sweepId, landed.newStatus === "done");
      return true;
    }
    if (landed.sweepStatus === "cancelled" || landed.sweepStatus === "failed") {
      // Landed after the sweep stopped: its result is discarded and not billed.
      await this.discard(chunk);
    }
    return false;
  }
}

/** What kickdrift_record_chunk returns. */
interface RecordRow {
  recorded: number;
  new_status: string | null;
  sweep_status: string | null;
  easy: number;
  /** The chunk's debit (ms), recorded here when easy, else for the caller's careful path. */
  billed_ms: string | number;
}

interface SweepInfo {
  studioId: string;
  spec: SweepSpec;
  /** Some cells came from the cache at submit (partial results rows may exist). */
  hasCached: boolean;
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
