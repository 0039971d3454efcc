/**
 * The demo seed leaves the invented studio with work computed by the engine through the ordinary
 * queue: finished sweeps (one with exploded cells, one comparing integrators, a box scene), a
 * catalogue check with a pair at risk and a snapshot sweep; every cell equals a fresh run of the
 * same spec byte for byte, and every millisecond the runner measured is in the ledger exactly once.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import type { Db } from "@/db/client";
import { ledgerEntries, sweeps, type Sweep } from "@/db/schema";
import { DEMO_STUDIO_NAME, seedDemo } from "@/server/seed";
import { DEMO_GRANT_MS } from "@/lib/ledger/ledger";
import { balanceMs } from "@/lib/quotas/standing";
import { storedCells } from "@/lib/queue/views";
import { studioOverview } from "@/lib/studios/overview";
import { createChunkPool, type ChunkPool } from "@/lib/sweeps/pool";
import { resultsHeader, runSweep } from "@/lib/sweeps/run";
import { resultsToCsv } from "@/lib/sweeps/results";
import type { SweepSpec } from "@/lib/sweeps/spec";
import type { CellResult } from "@/lib/sweeps/results";
import { startSweepRunner, stopSweepRunner, waitForSweep } from "../sweeps/support";

let db: Db;
let studioId: string;
let finished: Sweep[];
let freshPool: ChunkPool;

beforeAll(async () => {
  ({ db } = await startSweepRunner());
  const seedStarted = performance.now();
  ({ studioId } = await seedDemo(db));
  const seedMs = performance.now() - seedStarted;
  const rows = await db.select().from(sweeps).where(eq(sweeps.studioId, studioId));
  const workStarted = performance.now();
  finished = [];
  for (const row of rows) finished.push(await waitForSweep(row.id, (sweep) => sweep.status === "done", 240_000));
  // Figures for the closing note, not assertions (speed is measured, never asserted).
  console.log(`[demo seed] seed ${seedMs.toFixed(0)} ms; ${rows.length} sweeps, ${rows.reduce((n, r) => n + r.cells, 0)} cells computed by the queue in a further ${(performance.now() - workStarted).toFixed(0)} ms (1 worker thread)`);
  freshPool = createChunkPool({ threads: 1, entry: "source" });
}, 300_000);

afterAll(async () => {
  await freshPool?.close();
  await stopSweepRunner();
});

const csvOf = (spec: SweepSpec, cells: readonly CellResult[]) => resultsToCsv(resultsHeader(spec), cells);

describe("the demo seed", () => {
  it("leaves finished sweeps with exploded cells, compared integrators, a box scene and a snapshot scene", () => {
    expect(finished.length).toBeGreaterThanOrEqual(6);
    const exploded = finished.filter((sweep) => ((sweep.verdictCounts as Record<string, number>).exploded ?? 0) > 0);
    expect(exploded.length).toBeGreaterThan(0);
    const specs = finished.map((sweep) => sweep.spec as SweepSpec);
    expect(specs.some((spec) => spec.axes.some((axis) => axis.parameter === "integrator" && (axis.values ?? []).length >= 2))).toBe(true);
    expect(specs.some((spec) => spec.scenario.scene.kind === "box")).toBe(true);
    expect(specs.some((spec) => spec.scenario.scene.kind === "snapshot")).toBe(true);
    for (const sweep of finished) expect(sweep.cellsDone, sweep.name).toBe(sweep.cells);
  });

  it("shows a finished catalogue check with a pair at risk on the studio home", async () => {
    const overview = await studioOverview(db, studioId, "engineer");
    expect(overview.checks.length).toBe(1);
    expect(overview.checks[0].status).toBe("done");
    expect(overview.checks[0].pairsAtRisk?.length ?? 0).toBeGreaterThan(0);
    expect(overview.latest.length).toBeGreaterThanOrEqual(4);
    expect(overview.nextInvoice).toBeNull(); // engineers see no money
    const finance = await studioOverview(db, studioId, "finance");
    expect(finance.nextInvoice?.overageMs).toBe(0);
  });

  it("stores cells byte for byte equal to a fresh run of the same specs", async () => {
    for (const sweep of finished) {
      const spec = sweep.spec as SweepSpec;
      const fresh: CellResult[] = [];
      await runSweep(spec, { pool: freshPool, onResults: (results) => fresh.push(...results) });
      const stored = await storedCells(db, sweep);
      expect(stored.length, sweep.name).toBe(sweep.cells);
      expect(csvOf(spec, stored), sweep.name).toBe(csvOf(spec, fresh));
    }
  }, 300_000);

  it("bills every measured millisecond once: ledger usage = the sweeps' compute, balance = grant − usage", async () => {
    const entries = await db.select().from(ledgerEntries).where(eq(ledgerEntries.studioId, studioId));
    const usage = entries.filter((entry) => entry.kind === "usage");
    const usedMs = usage.reduce((sum, entry) => sum + entry.overageMs - entry.computeMs, 0);
    const sweepMs = finished.reduce((sum, sweep) => sum + sweep.computeMs, 0);
    expect(usedMs).toBe(sweepMs);
    // One usage entry per (sweep, chunk): a retry never bills twice.
    expect(new Set(usage.map((entry) => `${entry.sweepId}:${entry.chunkIndex}`)).size).toBe(usage.length);
    expect(await balanceMs(db, studioId)).toBe(DEMO_GRANT_MS - usedMs);
  });

  it("adds nothing when it runs again", async () => {
    const before = (await db.select().from(sweeps).where(eq(sweeps.studioId, studioId))).length;
    const again = await seedDemo(db);
    expect(again.studioId).toBe(studioId);
    expect((await db.select().from(sweeps).where(eq(sweeps.studioId, studioId))).length).toBe(before);
    expect(DEMO_STUDIO_NAME).toBe("Gannet Yard Games");
  });
});
