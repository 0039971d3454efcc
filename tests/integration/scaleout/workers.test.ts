/**
 * Scale-out end to end on PostgreSQL: the app (its route handlers, in this process, with its
 * in-process runner off) and two `npm run worker` processes on one database.
 *
 * 1. A 4,096-cell sweep; one worker is killed with SIGKILL while it holds a chunk; the chunk comes
 *    back when its lease lapses and the other worker finishes the sweep; every chunk is billed
 *    exactly once; the cells route answers the very same bytes as the same spec run on the
 *    embedded PGlite by one process.
 * 2. SIGTERM: a worker with no grace hands its running chunk straight back to the queue; a worker
 *    with grace finishes what it holds (written and billed) before it exits; both exit 0.
 */
import { PGlite } from "@electric-sql/pglite";
import { drizzle } from "drizzle-orm/pglite";
import { migrate } from "drizzle-orm/pglite/migrator";
import { and, eq, inArray, sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, getDb, migrationsFolder, setDb, type Db } from "@/db/client";
import * as schema from "@/db/schema";
import { sweepChunks } from "@/db/schema";
import { cancelSweep } from "@/lib/queue/cancel";
import { QueueRunner } from "@/lib/queue/runner";
import { submitSweep } from "@/lib/queue/submit";
import { createChunkPool, type ChunkPool } from "@/lib/sweeps/pool";
import * as cellsRoute from "@/app/api/v1/studios/[studioId]/sweeps/[sweepId]/cells/route";
import * as sweepRoute from "@/app/api/v1/studios/[studioId]/sweeps/[sweepId]/route";
import * as metricsRoute from "@/app/api/metrics/route";
import * as readyRoute from "@/app/api/ready/route";
import { setTestEnv } from "../../helpers/db";
import { buildRequest, call, type RouteHandler } from "../../helpers/http";
import { makeSweepStudio, usageEntries, type TestStudio } from "../sweeps/support";
import { crateBinSpec, createTestDatabase, PG_URL, reportSkipWithoutPostgres, sampleOf, startWorker, until, type TestDatabase, type WorkerHandle } from "./support";

reportSkipWithoutPostgres("worker processes on PostgreSQL (SIGKILL mid-sweep, SIGTERM)");

/** Small chunks (64 of 64 cells), so the SIGKILL lands mid-sweep with most chunks still to run. */
const CHUNKS = { maxCellsPerChunk: 64 };
/** Short leases, so a killed worker's chunk comes back within seconds (renewed every third). */
const LEASE_MS = 2_000;

async function cellsBytes(studio: TestStudio, sweepId: string): Promise<Buffer> {
  const request = buildRequest({ path: `/api/v1/studios/${studio.studioId}/sweeps/${sweepId}/cells`, cookie: studio.cookies.engineer });
  const res = await (cellsRoute.GET as unknown as RouteHandler)(request, { params: Promise.resolve({ studioId: studio.studioId, sweepId }) });
  expect(res.status).toBe(200);
  return Buffer.from(await res.arrayBuffer());
}

interface SweepState {
  status: string;
  chunks: number;
  chunksDone: number;
  cells: number;
  cellsDone: number;
  computeMs: number;
}

async function sweepState(studio: TestStudio, sweepId: string): Promise<SweepState> {
  const { status, body } = await call(sweepRoute.GET, {
    path: `/api/v1/studios/${studio.studioId}/sweeps/${sweepId}`,
    params: { studioId: studio.studioId, sweepId },
    cookie: studio.cookies.engineer,
  });
  expect(status).toBe(200);
  return (body as { sweep: SweepState }).sweep;
}

async function appMetrics(): Promise<string> {
  const res = await (metricsRoute.GET as unknown as RouteHandler)(buildRequest({ path: "/api/metrics" }), { params: Promise.resolve({}) });
  expect(res.status).toBe(200);
  expect(res.headers.get("content-type")).toMatch(/^text\/plain; version=0\.0\.4/);
  return res.text();
}

/** The chunks a worker holds right now (its lease owner id is the worker's id). */
async function heldBy(db: Db, sweepId: string, ownerId: string) {
  return db
    .select()
    .from(sweepChunks)
    .where(and(eq(sweepChunks.sweepId, sweepId), eq(sweepChunks.leaseOwner, ownerId), eq(sweepChunks.status, "running")));
}

/**
 * Whether none of the connections named `appName` runs a statement, seen within `withinMs`. For a
 * frozen process: what it sent has then either committed or will roll back when it dies.
 */
async function statementsSettle(db: Db, appName: string, withinMs: number): Promise<boolean> {
  // A statement written to the socket just before the freeze reaches its server process at once;
  // the pause lets it show as active before the first look.
  await new Promise((resolve) => setTimeout(resolve, 100));
  const deadline = Date.now() + withinMs;
  for (;;) {
    const result = await db.execute(sql`select count(*)::int as running from pg_stat_activity where application_name = ${appName} and state = 'active'`);
    if (Number((result as unknown as { rows: { running: number }[] }).rows[0].running) === 0) return true;
    if (Date.now() > deadline) return false;
    await new Promise((resolve) => setTimeout(resolve, 25));
  }
}

describe.skipIf(!PG_URL)("worker processes on PostgreSQL", { timeout: 180_000 }, () => {
  let database: TestDatabase;
  let db: Db;
  let referenceBytes: Buffer;
  const workers: WorkerHandle[] = [];
  let pool: ChunkPool | undefined;

  beforeAll(async () => {
    // The reference: the same spec on the embedded PGlite, run by one process (its in-process runner).
    setTestEnv();
    const client = new PGlite();
    const embedded = drizzle(client, { schema }) as unknown as Db;
    await migrate(embedded as never, { migrationsFolder: migrationsFolder() });
    setDb(embedded, () => client.close());
    pool = createChunkPool({ threads: 2, entry: "source" });
    const studio = await makeSweepStudio("Crate Cascade reference");
    const sweep = await submitSweep(embedded, studio.studioId, { spec: crateBinSpec() }, { chunkOptions: CHUNKS });
    const runner = new QueueRunner({ db: embedded, pool, pollMs: 20 });
    await runner.start();
    await until("the reference sweep", async () => (await sweepState(studio, sweep.id)).status === "done", 120_000);
    await runner.stop();
    referenceBytes = await cellsBytes(studio, sweep.id);
    await closeDb();

    // The app on PostgreSQL, without its in-process runner; it and two workers start (and migrate) together.
    database = await createTestDatabase("workers");
    process.env.DATABASE_URL = database.url;
    process.env.KICKDRIFT_RUNNER = "off";
    const env = { KICKDRIFT_LEASE_MS: String(LEASE_MS), KICKDRIFT_POLL_MS: "50" };
    const [appDb, ...started] = await Promise.all([getDb(), startWorker(database.url, env), startWorker(database.url, env)]);
    db = appDb;
    workers.push(...started);
  }, 180_000);

  afterAll(async () => {
    for (const worker of workers) if (worker.child.exitCode === null && worker.child.signalCode === null) worker.child.kill("SIGKILL");
    await pool?.close();
    await closeDb();
    delete process.env.DATABASE_URL;
    delete process.env.KICKDRIFT_RUNNER;
    await database?.drop();
  });

  it("finishes a 4,096-cell sweep after a worker is killed with SIGKILL mid-sweep: each chunk billed once, the cells byte-identical to PGlite in one process", async () => {
    const ready = await call(readyRoute.GET, { path: "/api/ready" });
    expect(ready.status).toBe(200);
    expect(ready.body).toMatchObject({ status: "ready", database: "postgresql", runner: "off" });

    const studio = await makeSweepStudio("Crate Cascade on PostgreSQL");
    const submitted = await submitSweep(db, studio.studioId, { spec: crateBinSpec() }, { chunkOptions: CHUNKS });
    expect(submitted.cells).toBe(4096);
    expect(submitted.chunks).toBe(64);
    const [victim, survivor] = workers;

    // Kill the victim once it has finished a chunk and holds another (mid-chunk, mid-sweep). It is
    // frozen (SIGSTOP) while we look, so it sends nothing more; but statements it sent just before
    // (a chunk's record, several chunks' at once as landings overlap) still run and commit on the
    // server. So we look only once none of its connections runs a statement; if that does not
    // happen soon (one waits on a lock its own frozen transaction holds), it thaws and we look again.
    const held = await until("the victim to hold a chunk after finishing one", async () => {
      if ((await victim.metric("kickdrift_worker_chunks_computed_total")) < 1) return null;
      victim.child.kill("SIGSTOP");
      if (await statementsSettle(db, victim.appName, 1_500)) {
        const rows = await heldBy(db, submitted.id, victim.ownerId);
        if (rows.length > 0) return rows;
      }
      victim.child.kill("SIGCONT");
      return null;
    });
    victim.child.kill("SIGKILL");
    expect(await victim.exited).toBe("SIGKILL");
    const atKill = await sweepState(studio, submitted.id);
    expect(atKill.status).toBe("running");
    expect(atKill.chunksDone).toBeLessThan(atKill.chunks);

    // While the sweep runs the app's metrics show a queue and work in flight.
    const during = await appMetrics();
    expect(sampleOf(during, "kickdrift_queue_depth_chunks") + sampleOf(during, "kickdrift_running_chunks") + sampleOf(during, "kickdrift_lapsed_chunks")).toBeGreaterThan(0);

    const done = await until(
      "the sweep to finish on the surviving worker",
      async () => {
        const state = await sweepState(studio, submitted.id);
        return state.status === "done" ? state : null;
      },
      120_000,
    );
    expect(done.cellsDone).toBe(4096);
    expect(done.chunksDone).toBe(64);

    // Every chunk the killed worker held came back after its lease and was run again, by the survivor
    // (its second attempt); each chunk is done and billed once (below).
    const heldIds = held.map((c) => c.id);
    const afterwards = await db.select().from(sweepChunks).where(inArray(sweepChunks.id, heldIds));
    // Compared by chunk index: neither query promises an order.
    const byIndex = <T extends { chunkIndex: number }>(rows: T[]) => [...rows].sort((a, b) => a.chunkIndex - b.chunkIndex);
    expect(byIndex(afterwards).map((chunk) => [chunk.chunkIndex, chunk.status, chunk.attempts >= 2])).toEqual(byIndex(held).map((chunk) => [chunk.chunkIndex, "done", true]));

    // Billed exactly once per chunk: one usage entry per chunk index, summing to the sweep's compute.
    const debits = await usageEntries(submitted.id);
    expect(debits.map((d) => d.chunkIndex).sort((a, b) => (a ?? 0) - (b ?? 0))).toEqual(Array.from({ length: 64 }, (_, i) => i));
    expect(-debits.reduce((sum, d) => sum + d.computeMs, 0)).toBe(done.computeMs);

    // Determinism: the same bytes as the embedded, single-process run.
    const bytes = await cellsBytes(studio, submitted.id);
    expect(bytes.length).toBe(referenceBytes.length);
    expect(bytes.equals(referenceBytes)).toBe(true);

    const after = await appMetrics();
    expect(sampleOf(after, "kickdrift_queue_depth_chunks")).toBe(0);
    expect(sampleOf(after, "kickdrift_running_chunks")).toBe(0);
    expect(sampleOf(after, "kickdrift_cells_completed_total")).toBe(4096);
    expect(sampleOf(after, "kickdrift_chunks_completed_total")).toBe(64);
    expect(sampleOf(after, "kickdrift_sweeps", 'status="done"')).toBe(1);

    // The survivor did the rest; a SIGTERM with nothing held ends it cleanly.
    expect(await survivor.metric("kickdrift_worker_chunks_computed_total")).toBeGreaterThan(0);
    expect(await survivor.metric("kickdrift_worker_cells_per_second")).toBeGreaterThan(0);
    survivor.child.kill("SIGTERM");
    expect(await survivor.exited).toBe(0);
    expect(survivor.output()).toMatch(/every chunk it held has landed/);
  });

  it("on SIGTERM a worker with no grace hands its running chunk straight back; one with grace finishes its chunks; both exit 0", async () => {
    // Only this test's workers may claim: any left running (the first test ended early) stop first.
    for (const worker of workers) {
      if (worker.child.exitCode !== null || worker.child.signalCode !== null) continue;
      worker.child.kill("SIGCONT");
      worker.child.kill("SIGTERM");
      await worker.exited;
    }
    // A long lease: only a hand-back, never a lapse, can free a chunk within this test.
    const env = { KICKDRIFT_LEASE_MS: "600000", KICKDRIFT_POLL_MS: "50" };

    // No grace: one chunk of several seconds (256 cells of 20 s), so the signal surely lands while it runs.
    const heavyStudio = await makeSweepStudio("Crate Cascade long haul");
    const heavy = await submitSweep(db, heavyStudio.studioId, { spec: crateBinSpec(20, 1) }, { chunkOptions: { targetChunkMs: 600_000, maxCellsPerChunk: 256 } });
    expect(heavy.chunks).toBe(1);
    const hasty = await startWorker(database.url, { ...env, KICKDRIFT_SHUTDOWN_GRACE_MS: "0" });
    workers.push(hasty);
    const [held] = await until("the no-grace worker to hold the long chunk", async () => {
      const rows = await heldBy(db, heavy.id, hasty.ownerId);
      return rows.length === 1 ? rows : null;
    });
    hasty.child.kill("SIGTERM");
    expect(await hasty.exited).toBe(0);
    expect(hasty.output()).toMatch(/1 chunk\(s\) handed back to the queue/);
    const [handedBack] = await db.select().from(sweepChunks).where(eq(sweepChunks.id, held.id));
    expect(handedBack).toMatchObject({ status: "queued", leaseOwner: null, leaseExpiresAt: null, attempts: held.attempts - 1 });
    expect(await usageEntries(heavy.id)).toEqual([]);
    await cancelSweep(db, heavyStudio.studioId, heavy.id, "test");

    // With grace: whatever it holds when the signal comes is finished, written and billed.
    const studio = await makeSweepStudio("Crate Cascade shutdown");
    const sweep = await submitSweep(db, studio.studioId, { spec: crateBinSpec(3, 1) }, { chunkOptions: { maxCellsPerChunk: 64 } });
    expect(sweep.chunks).toBe(4);
    const patient = await startWorker(database.url, { ...env, KICKDRIFT_SHUTDOWN_GRACE_MS: "120000" });
    workers.push(patient);
    await until("the graceful worker to hold a chunk", async () => (await heldBy(db, sweep.id, patient.ownerId)).length >= 1);
    patient.child.kill("SIGTERM");
    expect(await patient.exited).toBe(0);
    expect(patient.output()).toMatch(/every chunk it held has landed/);
    const chunks = await db.select().from(sweepChunks).where(eq(sweepChunks.sweepId, sweep.id));
    const finished = chunks.filter((c) => c.status === "done");
    expect(finished.length).toBeGreaterThan(0);
    expect(chunks.filter((c) => c.status === "running")).toEqual([]);
    expect((await usageEntries(sweep.id)).map((d) => d.chunkIndex).sort()).toEqual(finished.map((c) => c.chunkIndex).sort());

    // Nothing is held any more; a runner in the app process takes the rest, each chunk billed once.
    const metrics = await appMetrics();
    expect(sampleOf(metrics, "kickdrift_running_chunks")).toBe(0);
    const runner = new QueueRunner({ db, pool: pool!, pollMs: 20 });
    await runner.start();
    try {
      const done = await until("the sweep to finish", async () => {
        const state = await sweepState(studio, sweep.id);
        return state.status === "done" ? state : null;
      });
      const debits = await usageEntries(sweep.id);
      expect(debits.map((d) => d.chunkIndex).sort()).toEqual([0, 1, 2, 3]);
      expect(-debits.reduce((sum, d) => sum + d.computeMs, 0)).toBe(done.computeMs);
    } finally {
      await runner.stop();
    }
  });
});
