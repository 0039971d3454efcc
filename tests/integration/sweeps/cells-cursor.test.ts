/**
 * The cells route's change cursor (`GET …/cells?after=<cursor>`), as the sweep page uses it while a
 * sweep runs: each answer holds only the cells of the results rows written after the cursor given,
 * and the cursor to ask with next (body and x-kickdrift-cursor header); merged by index
 * (components/sweeps/sweep-cells.ts, the page's own merge), the answers give the very bytes of the
 * full export at the end. A chunk whose cached cells were stored at submit comes again, whole, once
 * it has run, and the merge holds each cell once. Chunks run here only when the test lets them (a
 * gate in front of the real worker pool), so every step is the same on any machine.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import type { Db } from "@/db/client";
import { sweepChunks, type Sweep } from "@/db/schema";
import { CURSOR_HEADER } from "@/lib/queue/api";
import { QueueRunner } from "@/lib/queue/runner";
import { submitSweep } from "@/lib/queue/submit";
import { cellJson, storedCells } from "@/lib/queue/views";
import { expandAxes } from "@/lib/sweeps/grid";
import { createChunkPool, type ChunkPool } from "@/lib/sweeps/pool";
import { csvHeader } from "@/lib/sweeps/results";
import type { SweepSpec } from "@/lib/sweeps/spec";
import type { CellRow } from "@/components/sweeps/sweep-api";
import { FIRST_CURSOR, withPage, type CellsPage, type HeldCells } from "@/components/sweeps/sweep-cells";
import * as cellsRoute from "@/app/api/v1/studios/[studioId]/sweeps/[sweepId]/cells/route";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { buildRequest, errorOf, type RouteHandler } from "../../helpers/http";
import { makeSweepStudio, puckSpec, sweepRow, waitForSweep, type TestStudio } from "./support";

let db: Db;
let realPool: ChunkPool;
let runner: QueueRunner;

/** Chunks wait here until the test lets them through (or the gate is opened for good). */
const gate = {
  open: false,
  permits: 0,
  waiting: [] as (() => void)[],
  async pass(): Promise<void> {
    if (this.open) return;
    if (this.permits > 0) {
      this.permits--;
      return;
    }
    await new Promise<void>((resolve) => this.waiting.push(resolve));
  },
  let(n: number): void {
    for (let i = 0; i < n; i++) {
      const next = this.waiting.shift();
      if (next) next();
      else this.permits++;
    }
  },
  openForGood(): void {
    this.open = true;
    this.let(this.waiting.length);
  },
};

beforeAll(async () => {
  db = await useFreshDb();
  realPool = createChunkPool({ threads: 1, entry: "source" });
  const gated: ChunkPool = {
    ...realPool,
    threads: realPool.threads,
    async run(task, options) {
      // Chunks wait at the gate; keying a stored run in idle time (no cells change) does not.
      if (task.kind !== "keys") await gate.pass();
      return realPool.run(task, options);
    },
  };
  // One chunk held at a time, so chunks land in the order the gate lets them through.
  runner = new QueueRunner({ db, pool: gated, pollMs: 20, leaseMs: 60_000, concurrency: 1 });
  await runner.start();
});
afterAll(async () => {
  gate.openForGood();
  await runner?.stop();
  await realPool?.close();
  await closeTestDb();
});

interface Answer {
  status: number;
  text: string;
  header: string | null;
}

async function cellsAnswer(studio: TestStudio, sweepId: string, query: string, cookie = studio.cookies.owner): Promise<Answer> {
  const request = buildRequest({ path: `/api/v1/studios/${studio.studioId}/sweeps/${sweepId}/cells${query}`, cookie });
  const res = await (cellsRoute.GET as unknown as RouteHandler)(request, { params: Promise.resolve({ studioId: studio.studioId, sweepId }) });
  return { status: res.status, text: await res.text(), header: res.headers.get(CURSOR_HEADER) };
}

/** One incremental answer, checked: 200, the cells in index order, the body's cursor equal to the header's. */
async function pageAfter(studio: TestStudio, sweepId: string, after: string): Promise<{ page: CellsPage; text: string }> {
  const answer = await cellsAnswer(studio, sweepId, `?after=${after}`);
  expect(answer.status).toBe(200);
  const page = JSON.parse(answer.text) as CellsPage;
  expect(Object.keys(page)).toEqual(["cells", "cursor"]);
  expect(page.cursor).toMatch(/^[0-9]+$/);
  expect(answer.header).toBe(page.cursor);
  const indices = page.cells.map((cell) => cell.index);
  expect(indices).toEqual([...indices].sort((a, b) => a - b));
  return { page, text: answer.text };
}

/** The reference serialiser (JSON.stringify over storedCells, as the full export is checked in storage.test.ts) for these cells and cursor. */
async function referencePage(sweep: Sweep, indices: ReadonlySet<number>, cursor: string): Promise<string> {
  const cells = (await storedCells(db, sweep)).filter((cell) => indices.has(cell.index));
  return JSON.stringify({ cells: cells.map(cellJson), cursor });
}

function indicesOf(cells: readonly CellRow[]): number[] {
  return cells.map((cell) => cell.index);
}

async function chunksDone(sweepId: string, count: number): Promise<Sweep> {
  return waitForSweep(sweepId, (s) => s.chunksDone >= count);
}

describe("the cells route's change cursor", { timeout: 120_000 }, () => {
  it("while a sweep runs, each answer holds only what landed since the cursor, and the merged answers are the full export's bytes", async () => {
    const studio = await makeSweepStudio("Driftwood Arcade");
    // 15 cells in chunks of 4, 4, 4 and 3; none cached (a new studio).
    const sweep = await submitSweep(db, studio.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 4 } });
    expect([sweep.chunks, sweep.cachedCells]).toEqual([4, 0]);

    // Nothing has run: no cells, and the cursor of a sweep with no results row.
    const first = await pageAfter(studio, sweep.id, FIRST_CURSOR);
    expect(first.page).toEqual({ cells: [], cursor: "0" });
    let held: HeldCells = withPage(undefined, first.page);

    // Chunk 0 lands; the answer after the held cursor is exactly its four cells, in the reference bytes.
    gate.let(1);
    let row = await chunksDone(sweep.id, 1);
    let step = await pageAfter(studio, sweep.id, held.cursor);
    expect(indicesOf(step.page.cells)).toEqual([0, 1, 2, 3]);
    expect(BigInt(step.page.cursor)).toBeGreaterThan(BigInt(held.cursor));
    expect(step.text).toBe(await referencePage(row, new Set([0, 1, 2, 3]), step.page.cursor));
    held = withPage(held, step.page);

    // Asked again with nothing new: no cells, the same cursor, and the page keeps the very object it held.
    const idle = await pageAfter(studio, sweep.id, held.cursor);
    expect(idle.page).toEqual({ cells: [], cursor: held.cursor });
    expect(withPage(held, idle.page)).toBe(held);

    // An answer whose cursor was taken before chunk 1 landed, its body read after it landed: it
    // holds none of chunk 1 (its rows end at its cursor), and the next answer after that cursor does.
    const request = buildRequest({ path: `/api/v1/studios/${studio.studioId}/sweeps/${sweep.id}/cells?after=${held.cursor}`, cookie: studio.cookies.owner });
    const early = await (cellsRoute.GET as unknown as RouteHandler)(request, { params: Promise.resolve({ studioId: studio.studioId, sweepId: sweep.id }) });
    gate.let(1);
    row = await chunksDone(sweep.id, 2);
    const earlyPage = JSON.parse(await early.text()) as CellsPage;
    expect(earlyPage).toEqual({ cells: [], cursor: held.cursor });
    expect(early.headers.get(CURSOR_HEADER)).toBe(held.cursor);
    step = await pageAfter(studio, sweep.id, earlyPage.cursor);
    expect(indicesOf(step.page.cells)).toEqual([4, 5, 6, 7]);
    held = withPage(held, step.page);

    // Two chunks land between two answers: one answer holds both, in index order.
    gate.let(2);
    row = await waitForSweep(sweep.id, (s) => s.status === "done");
    step = await pageAfter(studio, sweep.id, held.cursor);
    expect(indicesOf(step.page.cells)).toEqual([8, 9, 10, 11, 12, 13, 14]);
    expect(step.text).toBe(await referencePage(row, new Set([8, 9, 10, 11, 12, 13, 14]), step.page.cursor));
    held = withPage(held, step.page);

    // The merged answers are the full export, byte for byte; the export's header names the same cursor.
    const full = await cellsAnswer(studio, sweep.id, "");
    expect(full.status).toBe(200);
    expect(JSON.stringify({ cells: held.cells })).toBe(full.text);
    expect(full.text).toBe(JSON.stringify({ cells: (await storedCells(db, row)).map(cellJson) }));
    expect(full.header).toBe(held.cursor);

    // The same answers as CSV: the header row and the rows changed after the cursor; the cursor in the header.
    const csvAll = await cellsAnswer(studio, sweep.id, `?format=csv&after=${FIRST_CURSOR}`);
    const csvNone = await cellsAnswer(studio, sweep.id, `?format=csv&after=${held.cursor}`);
    expect(csvAll.status).toBe(200);
    expect(csvAll.header).toBe(held.cursor);
    expect(csvAll.text).toBe((await cellsAnswer(studio, sweep.id, "?format=csv")).text);
    expect(csvNone.text).toBe(`${csvHeader(expandAxes(row.spec as SweepSpec))}\r\n`);
    expect(csvNone.header).toBe(held.cursor);
  });

  it("a cursor at or beyond the sweep's answers no cells and the sweep's own cursor", async () => {
    const studio = await makeSweepStudio("Driftwood Arcade West");
    const sweep = await submitSweep(db, studio.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 8 } });
    gate.let(sweep.chunks);
    await waitForSweep(sweep.id, (s) => s.status === "done");
    const cursor = (await pageAfter(studio, sweep.id, FIRST_CURSOR)).page.cursor;
    expect(BigInt(cursor)).toBeGreaterThan(0n);
    for (const after of [cursor, String(BigInt(cursor) + 1n), String(BigInt(cursor) + 1000n), "9223372036854775807"]) {
      expect((await pageAfter(studio, sweep.id, after)).page).toEqual({ cells: [], cursor });
    }
  });

  it("a partly cached sweep: the cached cells come first, the completed chunk comes again whole, and the merge holds each cell once", async () => {
    const studio = await makeSweepStudio("Driftwood Arcade North");
    const small = puckSpec();
    (small.axes as { count?: number }[])[0].count = 3;
    const seed = await submitSweep(db, studio.studioId, { spec: small });
    gate.let(seed.chunks);
    await waitForSweep(seed.id, (s) => s.status === "done");

    // 9 of the 15 cells are in the cache now; chunks of 4 mix cached and fresh cells.
    const sweep = await submitSweep(db, studio.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 4 } });
    expect(sweep.cachedCells).toBe(9);
    const chunks = await db.select().from(sweepChunks).where(eq(sweepChunks.sweepId, sweep.id));
    const toRun = chunks.filter((chunk) => chunk.status === "queued").length;

    // Before anything runs: the cached cells, stored at submit.
    const first = await pageAfter(studio, sweep.id, FIRST_CURSOR);
    expect(first.page.cells.length).toBe(9);
    let held = withPage(undefined, first.page);
    const cached = new Set(indicesOf(held.cells));
    let sent = first.page.cells.length;
    let resent = 0;

    for (let landed = 1; landed <= toRun; landed++) {
      gate.let(1);
      const row = await waitForSweep(sweep.id, (s) => s.chunksDone >= s.chunks - toRun + landed);
      const step = await pageAfter(studio, sweep.id, held.cursor);
      // A chunk of 4 (or of the last 3) cells, whole: its cached cells again with the fresh ones.
      const indices = indicesOf(step.page.cells);
      expect(indices.length === 4 || indices.length === 3).toBe(true);
      expect(indices).toEqual(Array.from({ length: indices.length }, (_, i) => indices[0] + i));
      resent += indices.filter((index) => cached.has(index)).length;
      expect(step.text).toBe(await referencePage(row, new Set(indices), step.page.cursor));
      sent += indices.length;
      held = withPage(held, step.page);
      expect(new Set(indicesOf(held.cells)).size).toBe(held.cells.length);
    }
    // Cached cells of partial chunks were sent twice; the merge still holds 15 cells, once each.
    expect(resent).toBeGreaterThan(0);
    expect(sent).toBe(15 + resent);
    expect(indicesOf(held.cells)).toEqual([...Array(15).keys()]);
    const done = await sweepRow(sweep.id);
    expect(done.status).toBe("done");
    const full = await cellsAnswer(studio, sweep.id, "");
    expect(JSON.stringify({ cells: held.cells })).toBe(full.text);
    expect(full.header).toBe(held.cursor);
  });

  it("answers a bad `after` with a 400 naming it and the limit, and another studio's sweep with a 404", async () => {
    const studio = await makeSweepStudio("Driftwood Arcade South");
    const rival = await makeSweepStudio("Harbourlight Pinball");
    const sweep = await submitSweep(db, studio.studioId, { spec: puckSpec() });
    gate.let(sweep.chunks);
    await waitForSweep(sweep.id, (s) => s.status === "done");

    for (const bad of ["-1", "text", "1e30", "1.5", "", "0x10", "+3", "9223372036854775808", "123456789012345678901234567890"]) {
      for (const format of ["", "&format=csv"]) {
        const answer = await cellsAnswer(studio, sweep.id, `?after=${encodeURIComponent(bad)}${format}`);
        expect(answer.status, `after=${bad}`).toBe(400);
        const error = errorOf(JSON.parse(answer.text));
        expect(error.code).toBe("validation_failed");
        expect(error.field).toBe("after");
        expect(error.message).toContain("9223372036854775807");
      }
    }

    // The rival's own URL with the sweep's id: the same 404 as a sweep that does not exist.
    for (const query of ["?after=0", `?after=0&format=csv`]) {
      const request = buildRequest({ path: `/api/v1/studios/${rival.studioId}/sweeps/${sweep.id}/cells${query}`, cookie: rival.cookies.owner });
      const res = await (cellsRoute.GET as unknown as RouteHandler)(request, { params: Promise.resolve({ studioId: rival.studioId, sweepId: sweep.id }) });
      expect(res.status).toBe(404);
      expect(res.headers.get(CURSOR_HEADER)).toBeNull();
      expect(errorOf(await res.json()).code).toBe("not_found");
    }
    // The sweep's studio through the rival's URL is no way in either.
    const request = buildRequest({ path: `/api/v1/studios/${rival.studioId}/sweeps/${sweep.id}/cells?after=0`, cookie: studio.cookies.owner });
    const res = await (cellsRoute.GET as unknown as RouteHandler)(request, { params: Promise.resolve({ studioId: rival.studioId, sweepId: sweep.id }) });
    expect(res.status).toBe(404);
  });
});
