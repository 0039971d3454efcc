/**
 * The same sweep costs the same to the millisecond however it runs (issue 16): pair, box and
 * snapshot sweeps through the in-process queue runner on PGlite with 1 and 2 threads in different
 * chunkings (once with both cores kept busy beside it), and through two worker processes on
 * PostgreSQL. The sweep's billed compute, its ledger debits and the recomputation cell by cell
 * (⌈Σ work units / rate⌉) agree in every run; wall time is recorded per chunk and differs.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, getDb, type Db } from "@/db/client";
import { sweepChunks } from "@/db/schema";
import { eq } from "drizzle-orm";
import { QueueRunner } from "@/lib/queue/runner";
import { submitSweep } from "@/lib/queue/submit";
import { createChunkPool, type ChunkPool } from "@/lib/sweeps/pool";
import type { SweepSpec } from "@/lib/sweeps/spec";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { busyLoops, METERING_SPECS as SPECS, referenceBillMs } from "../../unit/sweeps/metering-fixtures";
import { makeSweepStudio, usageEntries, waitForSweep } from "../sweeps/support";
import { createTestDatabase, PG_URL, reportSkipWithoutPostgres, startWorker, type TestDatabase, type WorkerHandle } from "./support";

reportSkipWithoutPostgres("metering on two worker processes on PostgreSQL");

/** The bill recomputed in this thread, cell by cell. */
const reference = new Map(SPECS.map(([kind, spec]) => [kind, referenceBillMs(spec)]));

/** Submits the spec, waits for it, and returns its bill as the sweep row, the ledger and the chunks record it. */
async function billOf(db: Db, studioId: string, spec: SweepSpec, maxCellsPerChunk: number) {
  const sweep = await submitSweep(db, studioId, { spec }, { chunkOptions: { maxCellsPerChunk, targetChunkMs: 60_000 } });
  const done = await waitForSweep(sweep.id, (s) => s.status === "done", 180_000);
  const ledgerMs = -(await usageEntries(sweep.id)).reduce((sum, entry) => sum + entry.computeMs, 0);
  const chunks = await db.select().from(sweepChunks).where(eq(sweepChunks.sweepId, sweep.id));
  return {
    sweepMs: done.computeMs,
    ledgerMs,
    chunkMs: chunks.reduce((sum, chunk) => sum + chunk.computeMs, 0),
    ceilingMs: done.ceilingMs,
    chunks: chunks.length,
    wallMs: chunks.reduce((sum, chunk) => sum + chunk.wallMs, 0),
  };
}

describe("billed compute through the in-process runner on PGlite", { timeout: 300_000 }, () => {
  let db: Db;
  beforeAll(async () => {
    db = await useFreshDb();
  });
  afterAll(closeTestDb);

  it.each(SPECS)("%s: the same ms with 1 and 2 threads, in different chunkings, and with both cores busy", async (kind, spec) => {
    const expected = reference.get(kind)!;
    const bills: number[] = [];
    const runs: [threads: number, maxCellsPerChunk: number, busy: boolean][] = [
      [1, 1, false],
      [2, 4, false],
      [2, 1_000, true],
    ];
    for (const [threads, maxCellsPerChunk, busy] of runs) {
      // A fresh studio each time: the result cache would otherwise serve the repeats for nothing.
      const studio = await makeSweepStudio(`${kind} studio ${threads}/${maxCellsPerChunk}${busy ? " busy" : ""}`);
      const pool: ChunkPool = createChunkPool({ threads, entry: "source" });
      const runner = new QueueRunner({ db, pool, pollMs: 20 });
      await runner.start();
      const load = busy ? busyLoops(2) : null;
      try {
        const bill = await billOf(db, studio.studioId, spec, maxCellsPerChunk);
        expect(bill.ledgerMs).toBe(bill.sweepMs);
        expect(bill.chunkMs).toBe(bill.sweepMs);
        expect(bill.sweepMs).toBeLessThanOrEqual(bill.ceilingMs);
        expect(bill.wallMs).toBeGreaterThan(0);
        bills.push(bill.sweepMs);
      } finally {
        await load?.stop();
        await runner.stop();
        await pool.close();
      }
    }
    expect(bills).toEqual([expected, expected, expected]);
  });
});

describe.skipIf(!PG_URL)("billed compute through two worker processes on PostgreSQL", { timeout: 300_000 }, () => {
  let database: TestDatabase;
  let db: Db;
  const workers: WorkerHandle[] = [];

  beforeAll(async () => {
    database = await createTestDatabase("metering");
    process.env.DATABASE_URL = database.url;
    process.env.KICKDRIFT_RUNNER = "off";
    const [appDb, ...started] = await Promise.all([getDb(), startWorker(database.url, { KICKDRIFT_POLL_MS: "50" }), startWorker(database.url, { KICKDRIFT_POLL_MS: "50" })]);
    db = appDb;
    workers.push(...started);
  }, 180_000);

  afterAll(async () => {
    for (const worker of workers) if (worker.child.exitCode === null && worker.child.signalCode === null) worker.child.kill("SIGKILL");
    await closeDb();
    delete process.env.DATABASE_URL;
    delete process.env.KICKDRIFT_RUNNER;
    await database?.drop();
  });

  it.each(SPECS)("%s: the same ms as the in-process runs and the recomputation", async (kind, spec) => {
    const studio = await makeSweepStudio(`${kind} studio on PostgreSQL`);
    const bill = await billOf(db, studio.studioId, spec, 2);
    expect(bill).toMatchObject({ sweepMs: reference.get(kind), ledgerMs: reference.get(kind), chunkMs: reference.get(kind) });
    // Both workers took part (chunks of two cells: enough of them for both to claim some).
    for (const worker of workers) expect(await worker.metric("kickdrift_worker_chunks_computed_total")).toBeGreaterThan(0);
  });
});
