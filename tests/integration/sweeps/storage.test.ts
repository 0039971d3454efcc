/**
 * The sweeps' storage: one packed results row per chunk. The running counters agree with the
 * stored cells; the cells route streams exactly the bytes the reference serialisers give (also
 * for a sweep partly served from the cache, and with the database result store); cancel stops a
 * running chunk on its thread.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import type { Db } from "@/db/client";
import { sweepChunks, sweepResults, type Sweep } from "@/db/schema";
import { cancelSweep } from "@/lib/queue/cancel";
import { submitSweep } from "@/lib/queue/submit";
import { cellJson, storedCells } from "@/lib/queue/views";
import { expandAxes } from "@/lib/sweeps/grid";
import { cellToCsv, countVerdicts, csvHeader } from "@/lib/sweeps/results";
import type { SweepSpec } from "@/lib/sweeps/spec";
import * as cellsRoute from "@/app/api/v1/studios/[studioId]/sweeps/[sweepId]/cells/route";
import { buildRequest, type RouteHandler } from "../../helpers/http";
import { ballPitSpec, makeSweepStudio, puckSpec, startSweepRunner, stopSweepRunner, sweepRow, usageEntries, waitForSweep, type TestStudio } from "./support";

let db: Db;

beforeAll(async () => ({ db } = await startSweepRunner()));
afterAll(async () => {
  await stopSweepRunner();
  delete process.env.KICKDRIFT_RESULT_STORE;
});

async function routeText(studio: TestStudio, sweepId: string, query = ""): Promise<string> {
  const request = buildRequest({ path: `/api/v1/studios/${studio.studioId}/sweeps/${sweepId}/cells${query}`, cookie: studio.cookies.owner });
  const res = await (cellsRoute.GET as unknown as RouteHandler)(request, { params: Promise.resolve({ studioId: studio.studioId, sweepId }) });
  expect(res.status).toBe(200);
  return res.text();
}

/** What the route answered before the packed storage: the reference serialisers over storedCells. */
async function referenceTexts(sweep: Sweep): Promise<{ json: string; csv: string }> {
  const cells = await storedCells(db, sweep);
  return {
    json: JSON.stringify({ cells: cells.map(cellJson) }),
    csv: `${csvHeader(expandAxes(sweep.spec as SweepSpec))}\r\n${cells.map((cell) => `${cellToCsv(cell)}\r\n`).join("")}`,
  };
}

async function expectCountersMatchCells(sweep: Sweep): Promise<void> {
  const cells = await storedCells(db, sweep);
  expect(sweep.cellsDone).toBe(cells.length);
  expect(cells.map((c) => c.index)).toEqual([...Array(sweep.cells).keys()]);
  expect(sweep.verdictCounts).toEqual(countVerdicts(cells));
  const chunks = await db.select().from(sweepChunks).where(eq(sweepChunks.sweepId, sweep.id));
  expect(sweep.chunksDone).toBe(chunks.filter((c) => c.status === "done").length);
  const rows = await db.select().from(sweepResults).where(eq(sweepResults.sweepId, sweep.id));
  expect(rows.length).toBe(sweep.chunks); // one packed row per chunk, not one per cell
  expect(rows.every((row) => row.complete)).toBe(true);
}

describe("packed storage", { timeout: 180_000 }, () => {
  it("counters equal what the cells say, and the cells route streams the reference bytes (JSON and CSV), also when partly cached", async () => {
    const studio = await makeSweepStudio("Kelpline Kites");
    const small = puckSpec();
    (small.axes as { count?: number }[])[0].count = 3;
    const first = await submitSweep(db, studio.studioId, { spec: small });
    await waitForSweep(first.id, (s) => s.status === "done");
    // 9 of its 15 cells are in the cache now; chunks of 4 mix cached and fresh cells.
    const mixed = await submitSweep(db, studio.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 4 } });
    expect(mixed.cachedCells).toBe(9);
    const done = await waitForSweep(mixed.id, (s) => s.status === "done");
    await expectCountersMatchCells(done);
    const reference = await referenceTexts(done);
    expect(await routeText(studio, done.id)).toBe(reference.json);
    expect(await routeText(studio, done.id, "?format=csv")).toBe(reference.csv);

    // The same spec in a studio with no cache and one chunk gives the same bytes.
    const other = await makeSweepStudio("Kelpline Kites North");
    const fresh = await submitSweep(db, other.studioId, { spec: puckSpec() });
    await waitForSweep(fresh.id, (s) => s.status === "done");
    expect(await routeText(other, fresh.id)).toBe(reference.json);
    expect(await routeText(other, fresh.id, "?format=csv")).toBe(reference.csv);
  });

  it("the database result store (as with DATABASE_URL) keeps the blobs in sweep_results.data and serves the same bytes", async () => {
    const studio = await makeSweepStudio("Kelpline Kites South");
    process.env.KICKDRIFT_RESULT_STORE = "database";
    try {
      const sweep = await submitSweep(db, studio.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 6 } });
      const done = await waitForSweep(sweep.id, (s) => s.status === "done");
      const rows = await db.select().from(sweepResults).where(eq(sweepResults.sweepId, done.id));
      expect(rows.map((row) => [row.location, row.data?.byteLength])).toEqual(rows.map((row) => [null, row.bytes]));
      await expectCountersMatchCells(done);
      const reference = await referenceTexts(done);
      expect(await routeText(studio, done.id)).toBe(reference.json);
      // A later sweep of the studio finds these cells through the database store too.
      const again = await submitSweep(db, studio.studioId, { spec: puckSpec() });
      expect(again.cachedCells).toBe(15);
      expect(await routeText(studio, again.id)).toBe(reference.json);
    } finally {
      delete process.env.KICKDRIFT_RESULT_STORE;
    }
  });

  it("cancel stops a running chunk on its worker thread: the chunk is cancelled unbilled, without waiting for it to land", async () => {
    const studio = await makeSweepStudio("Kelpline Kites East");
    // One chunk of nine box cells of a simulated minute each, stopped while it runs.
    const long = ballPitSpec(60);
    const sweep = await submitSweep(db, studio.studioId, { spec: long }, { chunkOptions: { maxCellsPerChunk: 9, targetChunkMs: 1e9 } });
    expect(sweep.chunks).toBe(1);
    await waitForSweep(sweep.id, (s) => s.status === "running");
    await cancelSweep(db, studio.studioId, sweep.id, "a test");
    // A hang guard, not a speed check; "stopped on its thread" below tells an abort from a landing.
    const deadline = Date.now() + 60_000;
    let chunk = (await db.select().from(sweepChunks).where(eq(sweepChunks.sweepId, sweep.id)))[0];
    while (chunk.status === "running" && Date.now() < deadline) {
      await new Promise((resolve) => setTimeout(resolve, 50));
      chunk = (await db.select().from(sweepChunks).where(eq(sweepChunks.sweepId, sweep.id)))[0];
    }
    expect(chunk.status).toBe("cancelled");
    expect(chunk.lastError).toMatch(/stopped on its thread/);
    expect(await usageEntries(sweep.id)).toEqual([]);
    const row = await sweepRow(sweep.id);
    expect([row.status, row.cellsDone, row.computeMs]).toEqual(["cancelled", 0, 0]);
    expect(await db.select().from(sweepResults).where(eq(sweepResults.sweepId, sweep.id))).toEqual([]);
    // The pool runs the next sweep on a fresh thread.
    const next = await submitSweep(db, studio.studioId, { spec: puckSpec() });
    expect((await waitForSweep(next.id, (s) => s.status === "done")).cellsDone).toBe(15);
  });
});
