/**
 * A studio's standing is derived in one place, kickdrift_studio_standing (drizzle/0020): TypeScript
 * reads it through lib/quotas/standing.ts and the queue's chunk recorder selects from it, so the
 * recorder's in-place debit and the careful path see the same balance, usage and cap.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq, sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { ledgerEntries, studioQuotas, sweeps } from "@/db/schema";
import { databaseNow } from "@/lib/billing/overdue";
import { appendLedgerEntry, usageKey } from "@/lib/ledger/ledger";
import { studioStanding } from "@/lib/quotas/enforce";
import { monthOf, PLAN_DEFAULTS } from "@/lib/quotas/plan";
import { balanceMs, chunkDebit, monthlyOverageMs, monthlyUsageMs } from "@/lib/quotas/standing";
import { claimChunks, recordChunk, type RecordParams } from "@/lib/queue/sql-functions";
import { submitSweep } from "@/lib/queue/submit";
import { WORK_UNITS_PER_BILLED_MS } from "@/lib/sweeps/metering";
import { VERDICTS } from "@/lib/physics/types";
import { closeTestDb, useFreshDb } from "../helpers/db";
import { makeSweepStudio, puckSpec } from "./sweeps/support";

let db: Db;
beforeAll(async () => {
  db = await useFreshDb();
});
afterAll(closeTestDb);

describe("kickdrift_studio_standing", () => {
  it("is the sum of the studio's ledger entries, its month's usage and overage, its cap row and its unfinished sweeps' reservations", async () => {
    const s = await makeSweepStudio("Standing Sums Studio", 20 * 60_000);
    // Times from the database's clock: the month boundary is the one the ledger's own timestamps use.
    const now = await databaseNow(db);
    const lastMonth = new Date(monthOf(now).start.getTime() - 60_000);
    await appendLedgerEntry(db, { studioId: s.studioId, kind: "usage", computeMs: -1_500, idempotencyKey: `t:a:${s.studioId}` });
    await appendLedgerEntry(db, { studioId: s.studioId, kind: "usage", computeMs: -200, overageMs: 300, idempotencyKey: `t:b:${s.studioId}` });
    await appendLedgerEntry(db, { studioId: s.studioId, kind: "usage", computeMs: -700, overageMs: 50, idempotencyKey: `t:c:${s.studioId}`, at: lastMonth });
    await db.insert(studioQuotas).values({ studioId: s.studioId, monthlyComputeMs: 123_456 });
    const sweep = await submitSweep(db, s.studioId, { spec: puckSpec() });

    // The reference: the rows themselves, summed here.
    const rows = await db.select().from(ledgerEntries).where(eq(ledgerEntries.studioId, s.studioId));
    const thisMonth = rows.filter((r) => r.kind === "usage" && r.createdAt >= monthOf(now).start && r.createdAt < monthOf(now).end);
    const [row] = await db.select().from(sweeps).where(eq(sweeps.id, sweep.id));
    const standing = await studioStanding(db, s.studioId, now);
    expect(standing.balanceMs).toBe(rows.reduce((sum, r) => sum + r.computeMs, 0));
    expect(standing.monthUsedMs).toBe(thisMonth.reduce((sum, r) => sum + r.overageMs - r.computeMs, 0));
    expect(standing.monthUsedMs).toBe(1_500 + 200 + 300);
    expect(standing.monthOverageMs).toBe(300);
    expect(standing.quotas.monthlyComputeMs).toBe(123_456);
    expect(standing.reservedMs).toBe(row.ceilingMs - row.releasedCeilingMs);
    expect(standing.reservedMs).toBeGreaterThan(0);
    expect(standing.runningSweeps).toBe(0);
    // The single-figure readers answer from the same function.
    expect(await balanceMs(db, s.studioId)).toBe(standing.balanceMs);
    expect(await monthlyUsageMs(db, s.studioId, now)).toBe(standing.monthUsedMs);
    expect(await monthlyOverageMs(db, s.studioId, now)).toBe(standing.monthOverageMs);
    expect(await monthlyUsageMs(db, s.studioId, lastMonth)).toBe(700 + 50);
  });

  it("a studio without a quotas row has the plan's cap; an unknown studio has no standing", async () => {
    const s = await makeSweepStudio("Standing Default Cap Studio", 0);
    expect((await studioStanding(db, s.studioId)).quotas.monthlyComputeMs).toBe(PLAN_DEFAULTS.monthlyComputeMs);
    await expect(studioStanding(db, "no-such-studio")).rejects.toMatchObject({ code: "not_found" });
    expect(await balanceMs(db, "no-such-studio")).toBe(0);
  });

  it("is inlined into the statement that reads it: a reader of the balance does not sum the reservations", async () => {
    const plan = await db.execute(sql`explain verbose select s.balance_ms, s.month_used_ms, s.cap_ms from kickdrift_studio_standing('any', now(), now(), 1::bigint) s`);
    const text = JSON.stringify((plan as unknown as { rows: unknown[] }).rows);
    expect(text).not.toMatch(/Function Scan/);
    expect(text).toMatch(/ledger_entries/);
    expect(text).not.toMatch(/sweeps/);
  });
});

describe("the claim", () => {
  it("answers each new sweep's studio, cached cells and spec with its first chunk, and leaves out the specs of sweeps the claimer holds", async () => {
    const a = await makeSweepStudio("Claim Spec Studio A", 20 * 60_000);
    const b = await makeSweepStudio("Claim Spec Studio B", 20 * 60_000);
    // 15 cells in chunks of 5: three chunks each.
    const sweepA = await submitSweep(db, a.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 5 } });
    const sweepB = await submitSweep(db, b.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 5 } });
    const claimed = await claimChunks(db, {
      owner: "claim-spec-test",
      leaseMs: 600_000,
      limit: 100,
      defaultMaxRunningSweeps: PLAN_DEFAULTS.maxRunningSweeps,
      knownSweeps: [sweepB.id],
    });
    const ofA = claimed.filter((c) => c.sweepId === sweepA.id);
    const ofB = claimed.filter((c) => c.sweepId === sweepB.id);
    expect(ofA.map((c) => c.chunkIndex)).toEqual([0, 1, 2]);
    expect(ofB.map((c) => c.chunkIndex)).toEqual([0, 1, 2]);
    const [storedA] = await db.select({ spec: sweeps.spec }).from(sweeps).where(eq(sweeps.id, sweepA.id));
    // The spec as the runner would read it from the sweep's row, once per sweep per claim.
    expect(ofA[0].spec).toEqual(storedA.spec);
    expect(ofA.slice(1).map((c) => c.spec)).toEqual([null, null]);
    expect(ofB.map((c) => c.spec)).toEqual([null, null, null]);
    expect(ofA.every((c) => c.studioId === a.studioId && c.cachedCells === 0)).toBe(true);
    expect(ofB.every((c) => c.studioId === b.studioId && c.cachedCells === 0)).toBe(true);
  });
});

describe("the chunk recorder reads the same standing", () => {
  it("debits in place exactly when the debit rule bills the whole chunk as prepaid, far from the low-balance mark and the cap", async () => {
    const s = await makeSweepStudio("Standing Recorder Studio", 20 * 60_000);
    const sweep = await submitSweep(db, s.studioId, { spec: puckSpec() });
    // Claimed by hand (no runner here); other tests' sweeps may be claimed with it and are left alone.
    const claimed = await claimChunks(db, { owner: "standing-test", leaseMs: 600_000, limit: 100, defaultMaxRunningSweeps: PLAN_DEFAULTS.maxRunningSweeps });
    const chunk = claimed.find((c) => c.sweepId === sweep.id)!;
    expect(chunk).toBeDefined();
    const now = await databaseNow(db);
    const record = (p: Partial<RecordParams>) =>
      recordChunk(db, {
        owner: "standing-test",
        chunkId: chunk.id,
        sweepId: sweep.id,
        studioId: s.studioId,
        cellsInBlob: chunk.cellCount,
        cellsRun: chunk.cellCount,
        workUnits: 40 * WORK_UNITS_PER_BILLED_MS,
        wallMs: 40,
        unitsPerMs: WORK_UNITS_PER_BILLED_MS,
        blob: { bytes: 0, location: null, data: new Uint8Array(0) },
        tallyByCode: VERDICTS.map((_, code) => (code === 0 ? chunk.cellCount : 0)),
        key: usageKey(sweep.id, chunk.chunkIndex),
        memo: "standing test chunk",
        month: monthOf(now),
        lowBalanceMs: 0,
        defaultCapMs: PLAN_DEFAULTS.monthlyComputeMs,
        firstAlertPercent: 100,
        onlyIfEasy: true,
        ...p,
      });

    // A low-balance mark above the whole balance: not easy, nothing recorded; the answer carries the chunk's debit.
    const probe = await record({ lowBalanceMs: Number.MAX_SAFE_INTEGER });
    expect(probe).toMatchObject({ recorded: false, easy: false });
    const billed = probe!.billedMs;
    expect(billed).toBeGreaterThan(0);

    const before = await studioStanding(db, s.studioId, now);
    // The cap, read by the recorder from the studio's quotas row: usage + the chunk reaching it is not easy.
    await db.insert(studioQuotas).values({ studioId: s.studioId, monthlyComputeMs: before.monthUsedMs + billed });
    expect(await record({ lowBalanceMs: -Number.MAX_SAFE_INTEGER })).toMatchObject({ recorded: false, easy: false });
    await db.update(studioQuotas).set({ monthlyComputeMs: before.monthUsedMs + billed + 1 }).where(eq(studioQuotas.studioId, s.studioId));
    // The balance, as TypeScript reads it: left exactly at the mark is not easy, one ms above it is.
    expect(await record({ lowBalanceMs: before.balanceMs - billed })).toMatchObject({ recorded: false, easy: false });
    const standing = await studioStanding(db, s.studioId, now);
    expect(await record({ lowBalanceMs: before.balanceMs - billed - 1 })).toMatchObject({ recorded: true, easy: true, billedMs: billed });

    // What it debited is what the debit rule gives for that standing: all prepaid.
    expect(chunkDebit(standing, billed)).toEqual({ prepaidMs: billed, overageMs: 0, unbilledMs: 0 });
    expect(await balanceMs(db, s.studioId)).toBe(before.balanceMs - billed);
    const [entry] = await db.select().from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, usageKey(sweep.id, chunk.chunkIndex)));
    expect({ computeMs: entry.computeMs, overageMs: entry.overageMs }).toEqual({ computeMs: -billed, overageMs: 0 });
  });
});
