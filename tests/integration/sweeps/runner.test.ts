/**
 * The queue runner end to end on in-memory PGlite and a real worker-thread pool: billing against
 * the quote, the result cache, cancel, and a crash mid-sweep followed by a restart.
 */
import { readFileSync } from "node:fs";
import { readdir } from "node:fs/promises";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq, inArray, sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { databaseNow } from "@/lib/billing/overdue";
import { sweepChunks, sweepResults } from "@/db/schema";
import { QueueRunner } from "@/lib/queue/runner";
import { cancelSweep } from "@/lib/queue/cancel";
import { resultStoreKind, resultsDir } from "@/lib/queue/result-store";
import { quoteSweep, submitSweep } from "@/lib/queue/submit";
import { cellJson, storedCells } from "@/lib/queue/views";
import { balanceMs } from "@/lib/quotas/standing";
import { simulate } from "@/lib/physics/index";
import { expandSweep } from "@/lib/sweeps/grid";
import { WORK_UNITS_PER_BILLED_MS } from "@/lib/sweeps/metering";
import { parsedSpec } from "../../unit/sweeps/fixtures";
import { createChunkPool, type ChunkPool } from "@/lib/sweeps/pool";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { ballPitSpec, gatedPool, grant, makeSweepStudio, puckSpec, sweepRow, usageEntries, waitForCondition, waitForSweep } from "./support";

/** `rows` in the order of `order` (matched by id): neither query promises an order. */
function byId<T extends { id: number }>(rows: T[], order: { id: number }[]): T[] {
  return order.map((o) => rows.find((r) => r.id === o.id)!);
}

let db: Db;
let pool: ChunkPool;

beforeAll(async () => {
  db = await useFreshDb();
  pool = createChunkPool({ threads: 1, entry: "source" });
});
afterAll(async () => {
  await pool?.close();
  await closeTestDb();
});

async function cellsText(sweepId: string): Promise<string> {
  return JSON.stringify({ cells: (await storedCells(db, await sweepRow(sweepId))).map(cellJson) });
}

function newRunner(onRecorded?: (sweepId: string, sweepFinished: boolean) => void): QueueRunner {
  return new QueueRunner({ db, pool, pollMs: 20, leaseMs: 30_000, onRecorded });
}

describe("queue runner", { timeout: 180_000 }, () => {
  it("bills the cells' work units, at most the quote's ceiling, one debit per chunk, and serves a second identical sweep from the cache for nothing", async () => {
    const studio = await makeSweepStudio("Tidewrack Toys");
    // The shipped example: about a second of compute, so the measured figure is not all rounding and start-up.
    const spec = JSON.parse(readFileSync(path.join(process.cwd(), "examples", "jellybean-jar-box.json"), "utf8")) as unknown;
    const quote = await quoteSweep(db, studio.studioId, spec);
    expect(quote.cells).toBe(12);
    expect(quote.cachedCells).toBe(0);
    const sweep = await submitSweep(db, studio.studioId, { spec });
    const runner = newRunner();
    await runner.start();
    try {
      const done = await waitForSweep(sweep.id, (s) => s.status === "done");
      const debits = await usageEntries(sweep.id);
      expect(debits.length).toBe(done.chunks);
      expect(new Set(debits.map((d) => d.idempotencyKey)).size).toBe(done.chunks);
      const billedMs = -debits.reduce((sum, d) => sum + d.computeMs, 0);
      expect(billedMs).toBe(done.computeMs);
      // The bill is ⌈Σ cells' work units / rate⌉ (lib/sweeps/metering.ts), recomputed here cell by cell in this thread.
      const units = expandSweep(parsedSpec(spec)).reduce((sum, cell) => sum + simulate(cell.scenario).workUnits, 0);
      expect(billedMs).toBe(Math.ceil(units / WORK_UNITS_PER_BILLED_MS));
      expect(billedMs).toBeLessThanOrEqual(quote.ceilingMs);
      expect(done.ceilingMs).toBe(quote.ceilingMs);
      expect(done.releasedCeilingMs).toBe(quote.ceilingMs);
      // The target for the expected figure on the shipped examples: within ±25 % of the bill.
      expect(Math.abs(billedMs - quote.expectedMs)).toBeLessThanOrEqual(0.25 * billedMs);
      expect(await balanceMs(db, studio.studioId)).toBe(60 * 60_000 - billedMs);

      const again = await quoteSweep(db, studio.studioId, spec);
      expect(again.cachedCells).toBe(12);
      expect(again.cellsToRun).toBe(0);
      expect(again.estimatedComputeMs).toBe(0);
      const second = await submitSweep(db, studio.studioId, { spec });
      const secondDone = await waitForSweep(second.id, (s) => s.status === "done");
      expect(secondDone.cachedCells).toBe(12);
      expect(await usageEntries(second.id)).toEqual([]);
      expect(await cellsText(second.id)).toBe(await cellsText(sweep.id));
    } finally {
      await runner.stop();
    }
  });

  it("runs only the cells not in the cache when a sweep partly overlaps an earlier one", async () => {
    const studio = await makeSweepStudio("Brinefoot Arcade");
    const small = puckSpec();
    (small.axes as { count?: number }[])[0].count = 3; // 1e3, 1e5, 1e7: part of the 5-point axis below
    const runner = newRunner();
    await runner.start();
    try {
      const first = await submitSweep(db, studio.studioId, { spec: small });
      await waitForSweep(first.id, (s) => s.status === "done");
      const quote = await quoteSweep(db, studio.studioId, puckSpec());
      expect(quote.cachedCells).toBe(9);
      expect(quote.cellsToRun).toBe(6);
      const full = await submitSweep(db, studio.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 4 } });
      const done = await waitForSweep(full.id, (s) => s.status === "done");
      expect(done.cellsDone).toBe(15);
      // Chunks whose cells were all cached were done at submit, unbilled.
      const billedChunks = (await usageEntries(full.id)).map((d) => d.chunkIndex);
      const chunks = await db.select().from(sweepChunks).where(eq(sweepChunks.sweepId, full.id));
      expect(billedChunks.length).toBeLessThanOrEqual(chunks.length);

      // The same bytes as a run of the whole spec without any cache (another studio).
      const other = await makeSweepStudio("Cold Harbour Games");
      const fresh = await submitSweep(db, other.studioId, { spec: puckSpec() });
      await waitForSweep(fresh.id, (s) => s.status === "done");
      expect(await cellsText(full.id)).toBe(await cellsText(fresh.id));
    } finally {
      await runner.stop();
    }
  });

  it("cancel stops the sweep: later chunks never run and only finished chunks are billed", async () => {
    const studio = await makeSweepStudio("Lanternfish Labs");
    const sweep = await submitSweep(db, studio.studioId, { spec: ballPitSpec(3) }, { chunkOptions: { maxCellsPerChunk: 1 } });
    expect(sweep.chunks).toBe(9);
    const runner = newRunner();
    await runner.start();
    try {
      await waitForSweep(sweep.id, (s) => s.chunksDone >= 1);
      const cancelled = await cancelSweep(db, studio.studioId, sweep.id, "a test");
      expect(cancelled.status).toBe("cancelled");
      await runner.stop();
      const chunks = await db.select().from(sweepChunks).where(eq(sweepChunks.sweepId, sweep.id));
      const done = chunks.filter((c) => c.status === "done");
      expect(done.length).toBeLessThan(9);
      expect(chunks.filter((c) => c.status === "queued" || c.status === "running")).toEqual([]);
      const debits = await usageEntries(sweep.id);
      expect(debits.map((d) => d.chunkIndex).sort()).toEqual(done.map((c) => c.chunkIndex).sort());
      const row = await sweepRow(sweep.id);
      expect(row.status).toBe("cancelled");
      expect(row.computeMs).toBe(-debits.reduce((sum, d) => sum + d.computeMs, 0));
      // Cancelled chunks never ran: none of them has a result row beyond the done chunks' cells.
      expect(row.cellsDone).toBe(done.reduce((sum, c) => sum + c.cellCount, 0));
      // A chunk that finished after the cancel left no file behind: the sweep's folder holds the
      // files of its results rows and nothing else (file store; the database store keeps no files).
      const rows = await db.select({ location: sweepResults.location }).from(sweepResults).where(eq(sweepResults.sweepId, sweep.id));
      const files = await readdir(path.join(resultsDir(), sweep.id)).catch(() => [] as string[]);
      if (resultStoreKind() === "file") expect(files.map((file) => `${sweep.id}/${file}`).sort()).toEqual(rows.map((r) => r.location).sort());
      else expect(files).toEqual([]);
    } finally {
      await runner.stop();
    }
  });

  it("resumes after a crash: lapsed leases go back to the queue, the cells are byte-identical to an uninterrupted run, one debit per chunk", async () => {
    const studio = await makeSweepStudio("Quillbarrow Studio");
    const spec = ballPitSpec(0.5);
    const reference = await submitSweep(db, studio.studioId, { spec: { ...spec, name: "reference" } }, { chunkOptions: { maxCellsPerChunk: 2 } });
    const first = newRunner();
    await first.start();
    await waitForSweep(reference.id, (s) => s.status === "done");
    await first.stop();
    const referenceCells = await cellsText(reference.id);

    // A second studio, so nothing comes from the first one's cache.
    const other = await makeSweepStudio("Quillbarrow Studio East");
    const sweep = await submitSweep(db, other.studioId, { spec }, { chunkOptions: { maxCellsPerChunk: 2 } });
    // The runner "dies" right after its second chunk is recorded (from its own hook, so the moment
    // does not depend on how fast the machine is): the crash stops it before it records another.
    let recorded = 0;
    let crashed: Promise<void> | undefined;
    let secondRecorded = () => {};
    const twoRecorded = new Promise<void>((resolve) => (secondRecorded = resolve));
    const doomed: QueueRunner = newRunner((sweepId) => {
      if (sweepId !== sweep.id || ++recorded !== 2) return;
      crashed = doomed.crash();
      secondRecorded();
    });
    await doomed.start();
    await twoRecorded;
    await crashed;
    const midway = await sweepRow(sweep.id);
    expect(midway.status).toBe("running");
    expect(midway.chunksDone).toBeLessThan(midway.chunks);
    // The crashed runner's leases are still held; make them lapse as time would.
    await db.execute(sql`update sweep_chunks set lease_expires_at = now() - interval '1 second' where status = 'running'`);

    const restarted = newRunner();
    await restarted.start();
    try {
      const done = await waitForSweep(sweep.id, (s) => s.status === "done");
      expect(await cellsText(sweep.id)).toBe(referenceCells);
      const debits = await usageEntries(sweep.id);
      expect(debits.length).toBe(done.chunks);
      expect(new Set(debits.map((d) => d.chunkIndex)).size).toBe(done.chunks);
    } finally {
      await restarted.stop();
    }
  });

  it("two runners share the queue: each chunk is claimed once, leases are renewed while chunks run, one debit per chunk", async () => {
    const studio = await makeSweepStudio("Driftglass Devices");
    const sweep = await submitSweep(db, studio.studioId, { spec: ballPitSpec(12) }, { chunkOptions: { maxCellsPerChunk: 3 } });
    // The gate holds every claimed chunk before it runs, until the claims have outlived their first
    // lease: only renewal keeps them. Without it the other runner would take a chunk over (attempts 2).
    // The lease is 3 s (renewed every second), so a busy machine's pauses do not lapse it by themselves.
    const gate = gatedPool(pool);
    const runners = [0, 1].map(() => new QueueRunner({ db, pool: gate, pollMs: 20, leaseMs: 3_000, concurrency: 1 }));
    for (const runner of runners) await runner.start();
    try {
      await waitForCondition("both runners to hold a chunk at the gate", () => gate.waiting >= 2);
      const held = await db.select().from(sweepChunks).where(and(eq(sweepChunks.sweepId, sweep.id), eq(sweepChunks.status, "running")));
      expect(new Set(held.map((c) => c.leaseOwner)).size).toBe(2);
      const firstExpiry = Math.max(...held.map((c) => c.leaseExpiresAt!.getTime()));
      // The database's clock decides when a lease lapses (databaseNow reads it); wait until it is past every first expiry.
      await waitForCondition("the first leases to pass their expiry", async () => (await databaseNow(db)).getTime() > firstExpiry + 500);
      const still = await db.select().from(sweepChunks).where(inArray(sweepChunks.id, held.map((c) => c.id)));
      expect(byId(still, held).map((c) => [c.status, c.attempts, c.leaseOwner])).toEqual(held.map((c) => ["running", 1, c.leaseOwner]));
      expect(still.every((c) => c.leaseExpiresAt!.getTime() > firstExpiry)).toBe(true);
      gate.open();
      const done = await waitForSweep(sweep.id, (s) => s.status === "done");
      const chunks = await db.select().from(sweepChunks).where(eq(sweepChunks.sweepId, sweep.id));
      expect(chunks.map((c) => [c.attempts, c.lastError])).toEqual(chunks.map(() => [1, null]));
      const debits = await usageEntries(sweep.id);
      expect(debits.length).toBe(done.chunks);
      expect(-debits.reduce((sum, d) => sum + d.computeMs, 0)).toBe(chunks.reduce((sum, c) => sum + c.computeMs, 0));
    } finally {
      gate.open();
      for (const runner of runners) await runner.stop();
    }
  });

  it("pauses a sweep when the studio runs out of minutes and resumes it after a grant", async () => {
    const studio = await makeSweepStudio("Saltmarsh Sprites", 0);
    await grant(studio.studioId, 10 * 60_000, `test:small:${studio.studioId}`);
    const sweep = await submitSweep(db, studio.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 5 } });
    // Spend the balance elsewhere before the runner starts.
    await grant(studio.studioId, -10 * 60_000, `test:spend:${studio.studioId}`);
    const runner = newRunner();
    await runner.start();
    try {
      const paused = await waitForSweep(sweep.id, (s) => s.status === "paused");
      expect(paused.reason).toBe("out of minutes");
      expect(paused.chunksDone).toBe(0);
      await grant(studio.studioId, 5 * 60_000, `test:topup:${studio.studioId}`);
      const done = await waitForSweep(sweep.id, (s) => s.status === "done");
      expect(done.reason).toBeNull();
    } finally {
      await runner.stop();
    }
  });
});
