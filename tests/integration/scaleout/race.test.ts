/**
 * Eight workers racing for the chunks of one sweep on PostgreSQL. Each is a QueueRunner with its
 * own connection pool (as separate processes would have), claiming with FOR UPDATE SKIP LOCKED;
 * they share one worker thread, so a claimed chunk waits its turn well past the lease and only
 * the heartbeat keeps it. Every chunk's run is recorded (who, from when to when): no chunk ever
 * runs twice at the same time, none is lost, and each is billed once.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { drizzle } from "drizzle-orm/node-postgres";
import type { Pool } from "pg";
import { closeDb, getDb, type Db } from "@/db/client";
import * as schema from "@/db/schema";
import { QueueRunner } from "@/lib/queue/runner";
import { submitSweep } from "@/lib/queue/submit";
import { storedCells } from "@/lib/queue/views";
import { createChunkPool, type ChunkPool } from "@/lib/sweeps/pool";
import { setTestEnv } from "../../helpers/db";
import { makeSweepStudio, sweepRow, usageEntries, waitForSweep } from "../sweeps/support";
import { crateBinSpec, createTestDatabase, PG_URL, reportSkipWithoutPostgres, type TestDatabase } from "./support";

reportSkipWithoutPostgres("eight workers racing for chunks");

const WORKERS = 8;
const PER_WORKER = 4;
/**
 * The 32 claimed chunks queue for ONE thread, the last for about 3.5 s: longer than this lease,
 * so only the heartbeat (every third of it) keeps them. Long enough that a busy machine's slower
 * queries do not make a heartbeat late.
 */
const LEASE_MS = 2_000;

interface RunRecord {
  worker: number;
  chunkIndex: number;
  startedAt: number;
  endedAt: number;
}

describe.skipIf(!PG_URL)("eight workers racing for chunks", { timeout: 180_000 }, () => {
  let database: TestDatabase;
  let db: Db;
  let threads: ChunkPool;
  const pools: Pool[] = [];

  beforeAll(async () => {
    setTestEnv();
    database = await createTestDatabase("race");
    process.env.DATABASE_URL = database.url;
    db = await getDb();
    threads = createChunkPool({ threads: 1, entry: "source" });
  });
  afterAll(async () => {
    await threads?.close();
    await Promise.all(pools.map((pool) => pool.end()));
    await closeDb();
    delete process.env.DATABASE_URL;
    await database?.drop();
  });

  it("never run one chunk twice at the same time and never lose one; each chunk billed once", async () => {
    const { Pool: PgPool } = await import("pg");
    const runs: RunRecord[] = [];
    const runners = Array.from({ length: WORKERS }, (_, worker) => {
      const pool = new PgPool({ connectionString: database.url, max: 4 });
      // The database is dropped (its connections ended) after the test; a connection ending then is expected.
      pool.on("error", () => undefined);
      pools.push(pool);
      const recording: ChunkPool = {
        threads: threads.threads,
        entry: threads.entry,
        async run(task, options) {
          const startedAt = performance.now();
          try {
            return await threads.run(task, options);
          } finally {
            runs.push({ worker, chunkIndex: task.chunkIndex, startedAt, endedAt: performance.now() });
          }
        },
        get pending() {
          return threads.pending;
        },
        get inFlight() {
          return threads.inFlight;
        },
        idle: () => threads.idle(),
        close: async () => undefined,
      };
      return new QueueRunner({ db: drizzle(pool, { schema }) as unknown as Db, pool: recording, concurrency: PER_WORKER, leaseMs: LEASE_MS, pollMs: 50 });
    });
    for (const runner of runners) await runner.start();
    try {
      const studio = await makeSweepStudio("Crate Cascade race");
      // 16 × 16 × 8 = 2,048 cells in 32 chunks of about 0.1 s: what the eight workers can hold at once.
      const sweep = await submitSweep(db, studio.studioId, { spec: crateBinSpec(3, 8) }, { chunkOptions: { maxCellsPerChunk: 64 } });
      expect(sweep.chunks).toBe(32);
      const done = await waitForSweep(sweep.id, (s) => s.status === "done", 150_000);

      // Never twice at the same time: the runs of each chunk do not overlap.
      const byChunk = new Map<number, RunRecord[]>();
      for (const run of runs) byChunk.set(run.chunkIndex, [...(byChunk.get(run.chunkIndex) ?? []), run]);
      expect([...byChunk.keys()].sort((a, b) => a - b)).toEqual(Array.from({ length: 32 }, (_, i) => i));
      for (const [chunkIndex, chunkRuns] of byChunk) {
        const ordered = [...chunkRuns].sort((a, b) => a.startedAt - b.startedAt);
        for (let i = 1; i < ordered.length; i++)
          expect(ordered[i].startedAt, `chunk ${chunkIndex} ran on workers ${ordered[i - 1].worker} and ${ordered[i].worker} at once`).toBeGreaterThanOrEqual(ordered[i - 1].endedAt);
      }
      // It was a race: every worker ran chunks.
      expect(new Set(runs.map((r) => r.worker)).size).toBe(WORKERS);

      // Never lost: every cell stored once, every chunk billed once, the sweep's figures agree.
      const cells = await storedCells(db, await sweepRow(sweep.id));
      expect(cells.map((c) => c.index)).toEqual(Array.from({ length: 2048 }, (_, i) => i));
      expect(done.cellsDone).toBe(2048);
      const debits = await usageEntries(sweep.id);
      expect(debits.map((d) => d.chunkIndex).sort((a, b) => (a ?? 0) - (b ?? 0))).toEqual(Array.from({ length: 32 }, (_, i) => i));
      expect(-debits.reduce((sum, d) => sum + d.computeMs, 0)).toBe(done.computeMs);
    } finally {
      for (const runner of runners) await runner.stop();
    }
  });
});
