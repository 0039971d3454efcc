/**
 * Chunks that fail in the engine: retried up to two times, then the sweep fails with the reason.
 * The pool here wraps the real one and makes chosen attempts throw, as an engine error would.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import type { Db } from "@/db/client";
import { sweepChunks } from "@/db/schema";
import { MAX_CHUNK_ATTEMPTS, QueueRunner } from "@/lib/queue/runner";
import { submitSweep } from "@/lib/queue/submit";
import { createChunkPool, type ChunkPool } from "@/lib/sweeps/pool";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { makeSweepStudio, puckSpec, usageEntries, waitForSweep } from "./support";

let db: Db;
let realPool: ChunkPool;

beforeAll(async () => {
  db = await useFreshDb();
  realPool = createChunkPool({ threads: 1, entry: "source" });
});
afterAll(async () => {
  await realPool?.close();
  await closeTestDb();
});

/** The real pool, except that the first `failures` runs of chunk `chunkIndex` throw. */
function flakyPool(chunkIndex: number, failures: number): ChunkPool {
  let failed = 0;
  return {
    ...realPool,
    threads: realPool.threads,
    run(task, options) {
      if (task.chunkIndex === chunkIndex && failed < failures) {
        failed++;
        return Promise.reject(new Error(`cell 3 of chunk ${chunkIndex} failed in the engine: non-finite force`));
      }
      return realPool.run(task, options);
    },
  };
}

describe("failed chunks", { timeout: 120_000 }, () => {
  it("a chunk that fails twice is retried and the sweep still completes, billed once per chunk", async () => {
    const studio = await makeSweepStudio("Flintlock Marbles");
    const sweep = await submitSweep(db, studio.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 5 } });
    const runner = new QueueRunner({ db, pool: flakyPool(1, MAX_CHUNK_ATTEMPTS - 1), pollMs: 20 });
    await runner.start();
    try {
      const done = await waitForSweep(sweep.id, (s) => s.status === "done" || s.status === "failed");
      expect(done.status).toBe("done");
      const [chunk] = await db.select().from(sweepChunks).where(eq(sweepChunks.sweepId, sweep.id)).then((rows) => rows.filter((r) => r.chunkIndex === 1));
      expect(chunk.attempts).toBe(MAX_CHUNK_ATTEMPTS);
      expect((await usageEntries(sweep.id)).length).toBe(done.chunks);
    } finally {
      await runner.stop();
    }
  });

  it("a chunk that fails three times fails the sweep with the engine's reason; the rest is not run", async () => {
    const studio = await makeSweepStudio("Flintlock Marbles West");
    const sweep = await submitSweep(db, studio.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 5 } });
    const runner = new QueueRunner({ db, pool: flakyPool(0, MAX_CHUNK_ATTEMPTS), pollMs: 20, concurrency: 1 });
    await runner.start();
    try {
      const failed = await waitForSweep(sweep.id, (s) => s.status === "failed" || s.status === "done");
      expect(failed.status).toBe("failed");
      expect(failed.reason).toMatch(/chunk 0 failed 3 times: .*non-finite force/);
      await runner.stop();
      const chunks = await db.select().from(sweepChunks).where(eq(sweepChunks.sweepId, sweep.id));
      expect(chunks.find((c) => c.chunkIndex === 0)?.status).toBe("failed");
      expect(chunks.filter((c) => c.status === "queued" || c.status === "running")).toEqual([]);
      const billed = (await usageEntries(sweep.id)).map((d) => d.chunkIndex);
      expect(billed).not.toContain(0);
      expect(billed.length).toBe(chunks.filter((c) => c.status === "done").length);
    } finally {
      await runner.stop();
    }
  });
});
