/**
 * The queue runner: claims queued chunks with a lease, runs them on the worker-thread pool, and
 * for each finished chunk writes in ONE transaction its cells, the result cache, the chunk
 * state, the sweep's counters and the ledger debit `usage:{sweepId}:{chunkIndex}` (written with
 * ON CONFLICT DO NOTHING, so a chunk run twice after a lost lease is billed once).
 *
 * Leases: a claimed chunk carries its runner's id and an expiry that the runner renews while the
 * chunk runs. A chunk whose lease lapsed (its runner died) goes back to the queue. Claims use
 * `FOR UPDATE SKIP LOCKED`, so several processes can share one PostgreSQL.
 *
 * Node only (worker threads).
 */
import { randomBytes } from "node:crypto";
import { and, eq, inArray, sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { resultCache, sweepCells, sweepChunks, sweeps, type Sweep, type SweepChunk } from "@/db/schema";
import { recordChunkUsage } from "@/lib/billing/usage";
import { effectiveQuotas, PLAN_DEFAULTS } from "@/lib/quotas/plan";
import { applyRunLimits, RUN_LIMIT_REASONS, sendCapAlerts } from "@/lib/quotas/enforce";
import { unpackResults, type ChunkOutcome, type ChunkTask } from "@/lib/sweeps/chunk-task";
import { axisValuesAt, expandAxes, forEachCellInRange } from "@/lib/sweeps/grid";
import { scenarioHash } from "@/lib/sweeps/hash";
import type { ChunkPool } from "@/lib/sweeps/pool";
import type { SweepSpec } from "@/lib/sweeps/spec";
import { RUNNER_KEY } from "./poke";
import { storableMetrics } from "./views";

/** Attempts per chunk: the first run plus two retries. */
export const MAX_CHUNK_ATTEMPTS = 3;
export const OUT_OF_MINUTES = RUN_LIMIT_REASONS.outOfMinutes;
/** Longest wait between two checks of the run limits while no chunk lands (ms). */
const LIMITS_EVERY_MS = 250;

export interface RunnerOptions {
  db: Db;
  pool: ChunkPool;
  /** Chunks this runner holds at once; default the pool's thread count. */
  concurrency?: number;
  /** Lease length (ms); renewed every third of it while a chunk runs. */
  leaseMs?: number;
  /** Idle wait between looks at the queue (ms). */
  pollMs?: number;
  /** Treat running chunks of other owners as dead at start (one process per database, as with PGlite). */
  reclaimForeignAtStart?: boolean;
  ownerId?: string;
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
  private limitsCheckedAt = 0;
  private landedSinceLimits = true;

  constructor(options: RunnerOptions) {
    this.db = options.db;
    this.pool = options.pool;
    this.concurrency = options.concurrency ?? options.pool.threads;
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
    this.renewTimer = setInterval(() => void this.renewLeases().catch(logError), Math.max(50, Math.floor(this.leaseMs / 3)));
    this.renewTimer.unref?.();
    this.loopDone = this.loop();
  }

  /** Nudge the loop (after a submit) instead of waiting for the next poll. */
  poke(): void {
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

  /** Whether the runner is claiming chunks (started and not stopped). */
  get isRunning(): boolean {
    return this.running;
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

  private async loop(): Promise<void> {
    while (this.running) {
      try {
        await this.reclaimLapsed(false);
        await this.applyLimits();
        await this.dropCancelled();
        let claimed = false;
        while (this.running && this.inFlight.size < this.concurrency) {
          const chunk = await this.claim();
          if (!chunk) break;
          claimed = true;
          this.launch(chunk);
        }
        if (claimed) continue;
      } catch (error) {
        logError(error);
      }
      await new Promise<void>((resolve) => {
        const timer = setTimeout(resolve, this.pollMs);
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
   * Quotas, balance and suspension (lib/quotas/enforce.ts): checked before the next claim whenever a
   * chunk has landed (usage changed: pause at the chunk boundary), else at most every LIMITS_EVERY_MS
   * (a top-up, quota raise or lifted suspension resumes within that), so an idle loop does not keep
   * the database busy.
   */
  private async applyLimits(): Promise<void> {
    if (!this.landedSinceLimits && Date.now() - this.limitsCheckedAt < LIMITS_EVERY_MS) return;
    this.landedSinceLimits = false;
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

  private async claim(): Promise<SweepChunk | null> {
    const leaseSeconds = this.leaseMs / 1000;
    const result = await this.db.execute(sql`
      update sweep_chunks set status = 'running', lease_owner = ${this.ownerId},
        lease_expires_at = now() + make_interval(secs => ${leaseSeconds}), attempts = attempts + 1
      where id = (
        -- Fair share: the studio with the fewest chunks running, then the one served longest ago.
        -- A queued sweep starts only while its studio runs fewer sweeps than maxRunningSweeps.
        with busy as (select s2.studio_id, count(*) as n from sweep_chunks c2 join sweeps s2 on s2.id = c2.sweep_id where c2.status = 'running' group by s2.studio_id),
          slots as (select studio_id, count(*) as n from sweeps where status = 'running' group by studio_id)
        select c.id from sweep_chunks c join sweeps s on s.id = c.sweep_id join studios st on st.id = s.studio_id
          left join studio_quotas q on q.studio_id = s.studio_id left join busy on busy.studio_id = s.studio_id left join slots on slots.studio_id = s.studio_id
        where c.status = 'queued' and s.status in ('queued', 'running') and st.status = 'active'
          and (s.status = 'running' or coalesce(slots.n, 0) < coalesce(q.max_running_sweeps, ${PLAN_DEFAULTS.maxRunningSweeps}))
        order by coalesce(busy.n, 0), st.last_chunk_claimed_at nulls first, s.created_at, c.sweep_id, c.chunk_index
        limit 1 for update of c skip locked)
      returning id`);
    const rows = (result as unknown as { rows: { id: number }[] }).rows;
    if (!rows.length) return null;
    const [chunk] = await this.db.select().from(sweepChunks).where(eq(sweepChunks.id, rows[0].id));
    await this.db.execute(sql`update studios set last_chunk_claimed_at = clock_timestamp() where id = (select studio_id from sweeps where id = ${chunk.sweepId})`);
    if (!(await this.startSweep(chunk))) return null;
    return chunk;
  }

  /**
   * Marks the chunk's sweep running. Starting a queued sweep re-checks maxRunningSweeps under a lock
   * on the studio row, so runners in several processes cannot together start one sweep too many;
   * the loser puts the chunk back (false).
   */
  private async startSweep(chunk: SweepChunk): Promise<boolean> {
    return this.db.transaction(async (tx) => {
      const [sweep] = await tx.select({ studioId: sweeps.studioId, status: sweeps.status }).from(sweeps).where(eq(sweeps.id, chunk.sweepId));
      if (!sweep || sweep.status !== "queued") return true;
      await tx.execute(sql`select id from studios where id = ${sweep.studioId} for update`);
      // Another runner may have started it while this one waited for the lock.
      const [now] = await tx.select({ status: sweeps.status }).from(sweeps).where(eq(sweeps.id, chunk.sweepId));
      if (now?.status !== "queued") return true;
      const { maxRunningSweeps } = await effectiveQuotas(tx, sweep.studioId);
      const [{ n }] = await tx.select({ n: sql<number>`count(*)::int` }).from(sweeps).where(and(eq(sweeps.studioId, sweep.studioId), eq(sweeps.status, "running")));
      if (Number(n) >= maxRunningSweeps) {
        await tx
          .update(sweepChunks)
          .set({ status: "queued", leaseOwner: null, leaseExpiresAt: null, attempts: sql`${sweepChunks.attempts} - 1` })
          .where(and(eq(sweepChunks.id, chunk.id), eq(sweepChunks.leaseOwner, this.ownerId)));
        return false;
      }
      await tx
        .update(sweeps)
        .set({ status: "running", startedAt: sql`coalesce(${sweeps.startedAt}, now())` })
        .where(and(eq(sweeps.id, chunk.sweepId), eq(sweeps.status, "queued")));
      return true;
    });
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
        this.landedSinceLimits = true;
        this.landing.delete(landed);
        this.poke();
      });
    this.landing.add(landed);
  }

  private async runChunk(chunk: SweepChunk, signal: AbortSignal): Promise<void> {
    const [sweep] = await this.db.select().from(sweeps).where(eq(sweeps.id, chunk.sweepId));
    if (!sweep) return;
    const spec = sweep.spec as SweepSpec;
    const axes = expandAxes(spec);
    // Cells already present (served from the cache at submit) are not run again.
    const present = new Set(
      (
        await this.db
          .select({ index: sweepCells.cellIndex })
          .from(sweepCells)
          .where(and(eq(sweepCells.sweepId, sweep.id), sql`${sweepCells.cellIndex} >= ${chunk.firstCell} and ${sweepCells.cellIndex} < ${chunk.firstCell + chunk.cellCount}`))
      ).map((r) => r.index),
    );
    const hashes = new Map<number, string>();
    const missing: { index: number; axisValues: (number | string)[]; scenario: import("@/lib/physics/types").Scenario }[] = [];
    forEachCellInRange(spec, axes, chunk.firstCell, chunk.cellCount, (cell) => {
      if (present.has(cell.index)) return;
      hashes.set(cell.index, scenarioHash(cell.scenario));
      missing.push(cell);
    });
    const task: ChunkTask =
      present.size === 0
        ? { kind: "range", chunkIndex: chunk.chunkIndex, spec, firstCell: chunk.firstCell, cellCount: chunk.cellCount }
        : { kind: "cells", chunkIndex: chunk.chunkIndex, cells: missing };
    let outcome: ChunkOutcome;
    try {
      outcome = await this.pool.run(task, { signal });
    } catch (error) {
      if (this.crashed || signal.aborted) {
        if (!this.crashed) await this.discard(chunk);
        return;
      }
      await this.recordFailure(chunk, error);
      return;
    }
    if (this.crashed) return;
    await this.recordOutcome(sweep, chunk, outcome, hashes, (index) => axisValuesAt(axes, index));
    await sendCapAlerts(this.db, sweep.studioId); // the chunk may have crossed 80 % or 100 % of the monthly cap
  }

  /** The chunk's sweep was stopped while it waited: mark it cancelled, bill nothing. */
  private async discard(chunk: SweepChunk): Promise<void> {
    await this.db
      .update(sweepChunks)
      .set({ status: "cancelled", leaseOwner: null, leaseExpiresAt: null })
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

  private async recordOutcome(
    sweep: Sweep,
    chunk: SweepChunk,
    outcome: ChunkOutcome,
    hashes: Map<number, string>,
    axisValuesOf: (index: number) => (number | string)[],
  ): Promise<void> {
    const results = unpackResults(outcome, axisValuesOf);
    await this.db.transaction(async (tx) => {
      const [current] = await tx.select().from(sweeps).where(eq(sweeps.id, sweep.id)).for("update");
      const [chunkNow] = await tx.select().from(sweepChunks).where(eq(sweepChunks.id, chunk.id)).for("update");
      if (!current || !chunkNow) return;
      if (chunkNow.status !== "running" || chunkNow.leaseOwner !== this.ownerId) return; // lease lost: another runner owns it now
      if (current.status === "cancelled" || current.status === "failed") {
        // Landed after the sweep stopped: its result is discarded and not billed.
        await tx.update(sweepChunks).set({ status: "cancelled", leaseOwner: null, leaseExpiresAt: null }).where(eq(sweepChunks.id, chunk.id));
        return;
      }
      const rows = results.map((result) => ({
        sweepId: sweep.id,
        cellIndex: result.index,
        scenarioHash: hashes.get(result.index) as string,
        metrics: storableMetrics(result.metrics),
        verdict: result.verdict,
        reason: result.reason,
        fromCache: false,
      }));
      for (let i = 0; i < rows.length; i += 500) {
        const batch = rows.slice(i, i + 500);
        await tx.insert(sweepCells).values(batch).onConflictDoNothing();
        // Distinct hashes per batch: one INSERT cannot touch the same key twice.
        const cacheRows = new Map(batch.map((row) => [row.scenarioHash, { studioId: sweep.studioId, scenarioHash: row.scenarioHash, metrics: row.metrics, verdict: row.verdict, reason: row.reason }]));
        await tx.insert(resultCache).values([...cacheRows.values()]).onConflictDoNothing();
      }
      await tx
        .update(sweepChunks)
        .set({ status: "done", leaseOwner: null, leaseExpiresAt: null, computeMs: outcome.computeMs, lastError: null })
        .where(eq(sweepChunks.id, chunk.id));
      const { billed } = await recordChunkUsage(tx, {
        studioId: sweep.studioId,
        sweepId: sweep.id,
        chunkIndex: chunk.chunkIndex,
        computeMs: outcome.computeMs,
        memo: `Sweep ${sweep.id} chunk ${chunk.chunkIndex} (${outcome.cellCount} cells)`,
      });
      const [cellsDone] = await tx.select({ n: sql<number>`count(*)::int` }).from(sweepCells).where(eq(sweepCells.sweepId, sweep.id));
      const [chunksDone] = await tx
        .select({ n: sql<number>`count(*)::int` })
        .from(sweepChunks)
        .where(and(eq(sweepChunks.sweepId, sweep.id), eq(sweepChunks.status, "done")));
      const finished = Number(chunksDone.n) === current.chunks;
      await tx
        .update(sweeps)
        .set({
          cellsDone: Number(cellsDone.n),
          chunksDone: Number(chunksDone.n),
          computeMs: billed ? current.computeMs + outcome.computeMs : current.computeMs,
          ...(finished ? { status: "done" as const, reason: null, finishedAt: new Date() } : current.status === "queued" ? { status: "running" as const } : {}),
        })
        .where(eq(sweeps.id, sweep.id));
    });
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
