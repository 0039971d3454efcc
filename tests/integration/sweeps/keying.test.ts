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
import { KEY_WORDS, METRIC_COUNT, PackedView, PackedWriter } from "@/lib/sweeps/packed";
import { METRIC_KEYS } from "@/lib/sweeps/results";
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

/**
 * The same run in packed format 2, as stored before the rotation metrics: the 13 metrics of
 * METRIC_KEYS and a 2-byte null mask a cell (the layout documented in lib/sweeps/packed.ts).
 */
function asVersion2(view: PackedView): Uint8Array {
  const n = view.count;
  const reasons = new TextEncoder().encode(Array.from({ length: n }, (_, c) => view.reason(c)).join("\u001e"));
  const align8 = (x: number) => (x + 7) & ~7;
  const keys = align8(32 + 4 * n);
  const metrics = align8(keys + 16 * n);
  const mask = metrics + 8 * METRIC_KEYS.length * n;
  const verdicts = mask + 2 * n;
  const bytes = new Uint8Array(verdicts + n + reasons.length);
  new Uint32Array(bytes.buffer, 0, 8).set([0x3152444b, 2, n, reasons.length, view.hasKeys ? 1 : 0]);
  new Int32Array(bytes.buffer, 32, n).set(view.indices);
  new Uint32Array(bytes.buffer, keys, 4 * n).set(view.keys);
  const values = new Float64Array(bytes.buffer, metrics, METRIC_KEYS.length * n);
  for (let c = 0; c < n; c++) {
    for (let m = 0; m < METRIC_KEYS.length; m++) {
      values[c * METRIC_KEYS.length + m] = view.metrics[c * METRIC_COUNT + m];
      if (view.isNull(c, m)) bytes[mask + 2 * c + (m >> 3)] |= 1 << (m & 7);
    }
  }
  bytes.set(view.verdicts, verdicts);
  bytes.set(reasons, verdicts + n);
  return bytes;
}

describe("runs stored before the rotation metrics (packed format 2)", { timeout: 120_000 }, () => {
  it("serve the cache only for cells without rotation metrics: friction cells run again, and the export is byte for byte a fresh sweep's", async () => {
    const studio = await makeSweepStudio("Marram Dune Games West");
    const spec = puckSpec();
    spec.scenario.contact = { ...spec.scenario.contact, friction: { coefficient: 0.4 } };
    spec.axes = [...(spec.axes ?? []), { parameter: "contact.friction.coefficient", values: [0, 0.4] }];
    const first = await submitSweep(db, studio.studioId, { spec }, { chunkOptions: { maxCellsPerChunk: 6 } });
    const done = await waitForSweep(first.id, (s) => s.status === "done");
    await waitForKeyed(done.id);
    const reference = await exportText(done.id);
    // The friction cells (μ 0.4) carry the rotation metrics in the export; the frictionless ones (μ 0) carry them null.
    const cells = await storedCells(db, done);
    expect(cells.filter((cell) => typeof cell.metrics.angularMomentumDriftRel === "number").map((cell) => cell.axisValues[2])).toEqual(Array(15).fill(0.4));
    // Put every stored run back to format 2, as stored before packed format 3.
    for (const row of await db.select().from(sweepResults).where(eq(sweepResults.sweepId, done.id))) {
      const blob = await putBlob(done.id, row.chunkIndex, `v2-${row.id}`, asVersion2(new PackedView(await readBlob(row))));
      await db.update(sweepResults).set({ location: blob.location, bytes: blob.bytes, data: blob.data }).where(eq(sweepResults.id, row.id));
      expect(new PackedView(await readBlob({ ...row, ...blob })).storedVersion).toBe(2);
    }
    const again = await submitSweep(db, studio.studioId, { spec });
    // The 15 frictionless cells come from the format-2 runs; the 15 friction cells are computed again.
    expect(again.cachedCells).toBe(15);
    const finished = await waitForSweep(again.id, (s) => s.status === "done");
    expect(await exportText(finished.id)).toBe(reference);
  });
});

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
