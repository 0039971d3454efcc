/**
 * Result files nothing points at (a blob written just before its runner died, or before a
 * recording that failed) are removed by removeOrphanBlobs, which the queue runner runs at start;
 * files of results rows, and files too young to judge, are kept.
 */
import { existsSync } from "node:fs";
import { mkdir, readdir, utimes, writeFile } from "node:fs/promises";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import type { Db } from "@/db/client";
import { sweepResults } from "@/db/schema";
import { fileSystemNowMs, ORPHAN_MIN_AGE_MS, removeOrphanBlobs, resultsDir } from "@/lib/queue/result-store";
import { submitSweep } from "@/lib/queue/submit";
import { cellJson, storedCells } from "@/lib/queue/views";
import { makeSweepStudio, puckSpec, startSweepRunner, stopSweepRunner, sweepRow, waitForKeyed, waitForSweep } from "./support";

let db: Db;

// The file store is the one that can leave files behind (the default with PGlite; chosen here
// also when the tests run on PostgreSQL, whose default is the database store).
beforeAll(async () => {
  process.env.KICKDRIFT_RESULT_STORE = "file";
  ({ db } = await startSweepRunner());
});
afterAll(async () => {
  await stopSweepRunner();
  delete process.env.KICKDRIFT_RESULT_STORE;
});

/**
 * Ages are set on the file system's clock, as removeOrphanBlobs reads them: the process clock may
 * differ from it (`npm run test:hostile` shifts the process clock by 400 days; file times stay real).
 */
async function ageFile(file: string, ageMs: number): Promise<void> {
  const when = new Date((await fileSystemNowMs(path.dirname(file))) - ageMs);
  await utimes(file, when, when);
}

async function writeAged(file: string, ageMs: number): Promise<void> {
  await mkdir(path.dirname(file), { recursive: true });
  await writeFile(file, new Uint8Array([1, 2, 3]));
  await ageFile(file, ageMs);
}

describe("orphan result files", { timeout: 120_000 }, () => {
  it("removes old files no results row points at, keeps the rows' files and young files, and the cells read the same", async () => {
    const studio = await makeSweepStudio("Sandpiper Slides");
    const sweep = await submitSweep(db, studio.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 6 } });
    const done = await waitForSweep(sweep.id, (s) => s.status === "done");
    // The runner rewrites each stored run with its keys once idle: wait, so the rows stay put below.
    await waitForKeyed(done.id);
    const before = JSON.stringify((await storedCells(db, done)).map(cellJson));
    const rows = await db.select({ location: sweepResults.location }).from(sweepResults).where(eq(sweepResults.sweepId, done.id));
    expect(rows.length).toBe(done.chunks);
    // The rows' own files are as old as any orphan: age alone must not take them.
    for (const row of rows) await ageFile(path.join(resultsDir(), row.location as string), 2 * ORPHAN_MIN_AGE_MS);

    const folder = path.join(resultsDir(), done.id);
    // Besides the rows' files: the unkeyed blobs the keying replaced, young, so kept for now.
    const present = (await readdir(folder)).map((file) => `${done.id}/${file}`);
    for (const row of rows) expect(present).toContain(row.location);
    await writeAged(path.join(folder, "0-a7.kdr"), 2 * ORPHAN_MIN_AGE_MS); // an attempt that died before recording
    await writeAged(path.join(folder, "1-a1.kdr.4242.tmp"), 2 * ORPHAN_MIN_AGE_MS); // a write cut short
    await writeAged(path.join(folder, "2-a9.kdr"), 1_000); // being recorded right now, perhaps
    const goneSweepFolder = path.join(resultsDir(), "swp_neverRecorded");
    await writeAged(path.join(goneSweepFolder, "0-a1.kdr"), 2 * ORPHAN_MIN_AGE_MS);

    expect(await removeOrphanBlobs(db)).toBe(3);
    const left = (await readdir(folder)).map((file) => `${done.id}/${file}`).sort();
    expect(left).toEqual([...present, `${done.id}/2-a9.kdr`].sort());
    expect(existsSync(goneSweepFolder)).toBe(false);
    expect(JSON.stringify((await storedCells(db, await sweepRow(done.id))).map(cellJson))).toBe(before);
    // Nothing left to take the second time.
    expect(await removeOrphanBlobs(db)).toBe(0);
  });
});
