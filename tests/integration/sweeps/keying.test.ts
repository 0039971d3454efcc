/**
 * Deferred keying: the queue runs chunks without scenario keys and keys the stored runs while its
 * pool is idle; a submit that meets a run not keyed yet keys it itself, so the result cache finds
 * every stored cell either way. The export's bytes do not change when a run is keyed.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import type { Db } from "@/db/client";
import { sweepResults } from "@/db/schema";
import { putBlob, readBlob } from "@/lib/queue/result-store";
import { submitSweep } from "@/lib/queue/submit";
import { cellJson, storedCells } from "@/lib/queue/views";
import { scenarioKey } from "@/lib/sweeps/cell-key";
import { cellRange, expandAxes } from "@/lib/sweeps/grid";
import { KEY_WORDS, PackedView, PackedWriter } from "@/lib/sweeps/packed";
import type { SweepSpec } from "@/lib/sweeps/spec";
import { makeSweepStudio, puckSpec, startSweepRunner, stopSweepRunner, sweepRow, usageEntries, waitForKeyed, waitForSweep } from "./support";

let db: Db;

beforeAll(async () => ({ db } = await startSweepRunner()));
afterAll(async () => {
  await stopSweepRunner();
});

async function exportText(sweepId: string): Promise<string> {
  return JSON.stringify((await storedCells(db, await sweepRow(sweepId))).map(cellJson));
}

/** The same run without keys, as the runner stores it before keying. */
function withoutKeys(view: PackedView): Uint8Array {
  const writer = new PackedWriter(view.count);
  for (let n = 0; n < view.count; n++) writer.copyFrom(view, n);
  writer.hasKeys = false;
  return writer.finish();
}

describe("deferred keying", { timeout: 120_000 }, () => {
  it("keys every stored run once the pool is idle, with the keys of the cells' scenarios, and the export stays byte for byte", async () => {
    const studio = await makeSweepStudio("Marram Dune Games");
    const sweep = await submitSweep(db, studio.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 6 } });
    const done = await waitForSweep(sweep.id, (s) => s.status === "done");
    const before = await exportText(done.id);
    await waitForKeyed(done.id);
    expect(await exportText(done.id)).toBe(before);
    // Each stored key is the key of that cell's scenario, computed here from the spec on its own.
    const spec = done.spec as SweepSpec;
    const cells = cellRange(spec, expandAxes(spec), 0, done.cells);
    const rows = await db.select().from(sweepResults).where(eq(sweepResults.sweepId, done.id));
    expect(rows.length).toBe(done.chunks);
    for (const row of rows) {
      const view = new PackedView(await readBlob(row));
      for (let n = 0; n < view.count; n++) {
        const expected = new Uint32Array(KEY_WORDS);
        scenarioKey(cells[view.indices[n]].scenario, expected);
        expect([...view.keys.subarray(n * KEY_WORDS, (n + 1) * KEY_WORDS)]).toEqual([...expected]);
      }
    }
  });

  it("a submit meeting runs not keyed yet keys them itself: every cell comes from the cache, unbilled", async () => {
    const studio = await makeSweepStudio("Marram Dune Games North");
    const first = await submitSweep(db, studio.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 6 } });
    const done = await waitForSweep(first.id, (s) => s.status === "done");
    await waitForKeyed(done.id);
    const reference = await exportText(done.id);
    // Put every stored run back to its unkeyed form, as just after its chunk was recorded.
    for (const row of await db.select().from(sweepResults).where(eq(sweepResults.sweepId, done.id))) {
      const blob = await putBlob(done.id, row.chunkIndex, `u${row.id}`, withoutKeys(new PackedView(await readBlob(row))));
      await db.update(sweepResults).set({ location: blob.location, bytes: blob.bytes, data: blob.data }).where(eq(sweepResults.id, row.id));
      expect(new PackedView(await readBlob({ ...row, ...blob })).hasKeys).toBe(false);
    }
    const again = await submitSweep(db, studio.studioId, { spec: puckSpec() });
    expect(again.cachedCells).toBe(15);
    const finished = await waitForSweep(again.id, (s) => s.status === "done");
    expect(await usageEntries(finished.id)).toEqual([]);
    expect(await exportText(finished.id)).toBe(reference);
  });
});
