/**
 * Debiting chunks: prepaid minutes first, overage only when allowed and within the caps, metered to
 * Stripe through the outbox exactly once even when Stripe is down while sweeps finish; concurrent
 * purchases and debits never spend the same minutes twice.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq, sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { ledgerEntries, outbox, studioQuotas } from "@/db/schema";
import { ensureOverageSubscription, METER_EVENT_NAME } from "@/lib/billing/catalog";
import { invoiceDetail } from "@/lib/billing/queries";
import { recordChunkUsage } from "@/lib/billing/usage";
import { appendLedgerEntry } from "@/lib/ledger/ledger";
import { balanceMs } from "@/lib/quotas/standing";
import { QueueRunner } from "@/lib/queue/runner";
import { submitSweep } from "@/lib/queue/submit";
import { createChunkPool, type ChunkPool } from "@/lib/sweeps/pool";
import { POST as sweepsPost } from "@/app/api/v1/studios/[studioId]/sweeps/route";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { call, errorOf } from "../../helpers/http";
import { grant, makeSweepStudio, puckSpec, waitForSweep } from "../sweeps/support";
import { meterDispatcher, startBillingHarness, waitUntil, type BillingHarness } from "./support";

let db: Db;
let h: BillingHarness;
let pool: ChunkPool;

beforeAll(async () => {
  db = await useFreshDb();
  h = await startBillingHarness();
  pool = createChunkPool({ threads: 1, entry: "source" });
});
afterAll(async () => {
  await pool?.close();
  await h.close();
  await closeTestDb();
});

async function allowOverage(studioId: string, capMs: number | null = null, monthlyComputeMs: number | null = null) {
  await db.insert(studioQuotas).values({ studioId, overageAllowed: true, overageCapMs: capMs, monthlyComputeMs }).onConflictDoUpdate({ target: studioQuotas.studioId, set: { overageAllowed: true, overageCapMs: capMs, monthlyComputeMs } });
}

const debit = (studioId: string, sweepId: string, chunkIndex: number, computeMs: number) =>
  db.transaction((tx) => recordChunkUsage(tx, { studioId, sweepId, chunkIndex, computeMs, memo: `test chunk ${chunkIndex}` }));

/** A sweep row to hang usage entries on (queued, never run here). */
async function sweepOf(studioId: string): Promise<string> {
  await grant(studioId, 60 * 60_000, `sweep-grant:${studioId}:${Math.random()}`);
  const sweep = await submitSweep(db, studioId, { spec: puckSpec() });
  await appendLedgerEntry(db, { studioId, kind: "adjustment", computeMs: -(60 * 60_000), idempotencyKey: `sweep-grant-back:${sweep.id}`, memo: "test: grant taken back" });
  return sweep.id;
}

describe("recordChunkUsage", () => {
  it("takes prepaid minutes first and, without overage, bills nothing past the balance", async () => {
    const s = await makeSweepStudio("Crateslide QA", 1_000);
    const sweepId = await sweepOf(s.studioId);
    expect(await debit(s.studioId, sweepId, 0, 600)).toEqual({ billed: true, prepaidMs: 600, overageMs: 0 });
    // 1,000 − 600 = 400 ms left; a 700 ms chunk takes those 400 and bills the other 300 nowhere (arithmetic).
    expect(await debit(s.studioId, sweepId, 1, 700)).toEqual({ billed: true, prepaidMs: 400, overageMs: 0 });
    expect(await balanceMs(db, s.studioId)).toBe(0);
    // A retried writer changes nothing.
    expect(await debit(s.studioId, sweepId, 1, 700)).toEqual({ billed: false, prepaidMs: 0, overageMs: 0 });
    expect(await balanceMs(db, s.studioId)).toBe(0);
    const meters = await db.select().from(outbox).where(and(eq(outbox.studioId, s.studioId), eq(outbox.kind, "stripe.meter_event")));
    expect(meters).toHaveLength(0);
  });

  it("meters the part past the balance when overage is allowed, clamped to the month's overage cap, once per chunk", async () => {
    const s = await makeSweepStudio("Crateslide Overage", 1_000);
    await allowOverage(s.studioId, 2_500);
    const sweepId = await sweepOf(s.studioId);
    expect(await debit(s.studioId, sweepId, 0, 1_800)).toEqual({ billed: true, prepaidMs: 1_000, overageMs: 800 });
    expect(await debit(s.studioId, sweepId, 1, 1_000)).toEqual({ billed: true, prepaidMs: 0, overageMs: 1_000 });
    // Cap 2,500 − 1,800 already metered = 700 ms of headroom for a 900 ms chunk (arithmetic).
    expect(await debit(s.studioId, sweepId, 2, 900)).toEqual({ billed: true, prepaidMs: 0, overageMs: 700 });
    expect(await debit(s.studioId, sweepId, 3, 500)).toEqual({ billed: true, prepaidMs: 0, overageMs: 0 });
    await debit(s.studioId, sweepId, 2, 900);
    const meters = await db.select().from(outbox).where(and(eq(outbox.studioId, s.studioId), eq(outbox.kind, "stripe.meter_event")));
    expect(meters.map((m) => [(m.payload as { identifier: string }).identifier, (m.payload as { valueMs: number }).valueMs]).sort()).toEqual([
      [`usage:${sweepId}:0`, 800],
      [`usage:${sweepId}:1`, 1_000],
      [`usage:${sweepId}:2`, 700],
    ]);
  });

  it("bills nothing past the monthly compute cap", async () => {
    const s = await makeSweepStudio("Crateslide Capped", 10_000);
    await allowOverage(s.studioId, null, 1_500);
    const sweepId = await sweepOf(s.studioId);
    expect(await debit(s.studioId, sweepId, 0, 1_000)).toEqual({ billed: true, prepaidMs: 1_000, overageMs: 0 });
    // 1,500 − 1,000 used = 500 ms left this month (arithmetic).
    expect(await debit(s.studioId, sweepId, 1, 2_000)).toEqual({ billed: true, prepaidMs: 500, overageMs: 0 });
  });

  it("mails owners and finance once when the balance falls to the low-balance mark", async () => {
    const s = await makeSweepStudio("Crateslide Low", 11 * 60_000);
    const sweepId = await sweepOf(s.studioId);
    await debit(s.studioId, sweepId, 0, 30_000); // 10.5 minutes left: above the 10-minute mark
    await debit(s.studioId, sweepId, 1, 60_000); // 9.5 minutes: crossed
    await debit(s.studioId, sweepId, 1, 60_000); // retried writer
    await debit(s.studioId, sweepId, 2, 60_000); // still below: no second mail
    const mails = await db.select().from(outbox).where(and(eq(outbox.studioId, s.studioId), eq(outbox.kind, "mail")));
    expect(mails.map((m) => (m.payload as { to: string }).to).sort()).toEqual([s.finance.email, s.owner.email].sort());
    expect((mails[0].payload as { subject: string }).subject).toContain("low on compute minutes");
  });
});

describe("reliability", () => {
  it("with Stripe down while sweeps finish, overage waits in the outbox and reaches Stripe exactly once; the invoice reconciles", async () => {
    const s = await makeSweepStudio("Gannet Yard Overage", 60 * 60_000);
    await allowOverage(s.studioId);
    const account = await ensureOverageSubscription(db, h.stripe, s.studioId);
    const sweep = await submitSweep(db, s.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 4 } });
    // The minutes go elsewhere before the sweep runs: every chunk is overage.
    await appendLedgerEntry(db, { studioId: s.studioId, kind: "adjustment", computeMs: -(60 * 60_000), idempotencyKey: `spent:${sweep.id}`, memo: "test: spent elsewhere" });
    h.fake.setOutage(true, "reset");
    const runner = new QueueRunner({ db, pool, pollMs: 20, leaseMs: 30_000 });
    await runner.start();
    const done = await waitForSweep(sweep.id, (row) => row.status === "done" || row.status === "failed" || row.status === "paused");
    await runner.stop();
    expect(done.status).toBe("done");
    const usage = (await db.select().from(ledgerEntries).where(eq(ledgerEntries.sweepId, sweep.id))).filter((e) => e.kind === "usage");
    const overageMs = usage.reduce((sum, e) => sum + e.overageMs, 0);
    expect(usage.every((e) => e.computeMs === 0)).toBe(true);
    // The sweep's bill (work units, lib/sweeps/metering.ts) is all overage; a chunk whose units did not
    // yet complete a billed millisecond is debited 0 ms and sends no meter event.
    expect(overageMs).toBe(done.computeMs);
    const metered = usage.filter((e) => e.overageMs > 0);
    expect(metered.length).toBeGreaterThan(0);

    const { dispatcher, advance } = meterDispatcher(db, h.stripe);
    // Other tests' rows are due too, so the counts below are of this studio's rows.
    const down = await dispatcher.dispatchDue();
    expect(down.delivered).toBe(0);
    const pending = await db.select().from(outbox).where(and(eq(outbox.studioId, s.studioId), eq(outbox.kind, "stripe.meter_event"), eq(outbox.status, "pending")));
    expect(pending).toHaveLength(metered.length);

    h.fake.setOutage(false);
    advance(60_000);
    expect(await dispatcher.dispatchDue()).toMatchObject({ retried: 0, failed: 0 });
    const delivered = await db.select().from(outbox).where(and(eq(outbox.studioId, s.studioId), eq(outbox.kind, "stripe.meter_event"), eq(outbox.status, "delivered")));
    expect(delivered).toHaveLength(metered.length);
    // A delivery whose acknowledgement was lost runs again: Stripe knows the identifier and counts it once.
    await db.update(outbox).set({ status: "pending" }).where(and(eq(outbox.studioId, s.studioId), eq(outbox.kind, "stripe.meter_event")));
    advance(60_000);
    expect(await dispatcher.dispatchDue()).toMatchObject({ delivered: metered.length, failed: 0 });

    const meter = (await h.stripe.billing.meters.list({ status: "active" })).data.find((m) => m.event_name === METER_EVENT_NAME)!;
    const minute = (t: number) => Math.floor(t / 60) * 60;
    const summaries = await h.stripe.billing.meters.listEventSummaries(meter.id, {
      customer: account.stripeCustomerId,
      start_time: minute(h.fake.now() - 3600),
      end_time: minute(h.fake.now()) + 120,
    });
    expect(summaries.data.reduce((sum, x) => sum + x.aggregated_value, 0)).toBe(overageMs);

    h.fake.advanceClock(h.fake.now() + 5);
    const [invoice] = h.fake.closePeriod({ customer: account.stripeCustomerId });
    // A total under half a cent is a zero invoice, paid at once; otherwise it waits open (sent, not charged).
    await waitUntil(async () => (await invoiceDetail(db, s.studioId, invoice.id).catch(() => null))?.invoice.status === invoice.status, "the invoice to be mirrored");
    const detail = await invoiceDetail(db, s.studioId, invoice.id);
    // Invoice = the ledger's usage entries = the meter events sent = the sweep's bill, to the ms.
    expect(detail.invoice.quantityMs).toBe(overageMs);
    expect(detail.reconciled).toBe(true);
    // overage ms × 0.00015 ¢ per ms (9 ¢ a minute), rounded once to whole cents (the fake's rule, half away from zero).
    expect(detail.invoice.totalCents).toBe(Math.round(overageMs * 0.00015));
  });

  it("concurrent purchases and chunk debits leave the balance equal to what was bought minus what was prepaid, never below zero", async () => {
    const s = await makeSweepStudio("Crateslide Rush", 5_000);
    const sweepId = await sweepOf(s.studioId);
    const chunks = Array.from({ length: 24 }, (_, i) => ({ i, ms: 300 + ((i * 37) % 200) }));
    const purchases = Array.from({ length: 4 }, (_, i) => i);
    const results = await Promise.all([
      ...chunks.map(({ i, ms }) => debit(s.studioId, sweepId, i, ms)),
      // Each chunk twice, as a retried runner would.
      ...chunks.map(({ i, ms }) => debit(s.studioId, sweepId, i, ms)),
      ...purchases.map((i) =>
        db.transaction((tx) => appendLedgerEntry(tx, { studioId: s.studioId, kind: "purchase", computeMs: 1_000, amountCents: 9, idempotencyKey: `purchase:cs_test_rush_${i}`, memo: "test purchase" })),
      ),
      ...purchases.map((i) =>
        db.transaction((tx) => appendLedgerEntry(tx, { studioId: s.studioId, kind: "purchase", computeMs: 1_000, amountCents: 9, idempotencyKey: `purchase:cs_test_rush_${i}`, memo: "test purchase" })),
      ),
    ]);
    const debits = results.slice(0, chunks.length * 2) as { billed: boolean; prepaidMs: number }[];
    expect(debits.filter((d) => d.billed)).toHaveLength(chunks.length);
    const prepaid = debits.reduce((sum, d) => sum + d.prepaidMs, 0);
    const [sum] = await db.select({ total: sql<string>`sum(${ledgerEntries.computeMs})` }).from(ledgerEntries).where(eq(ledgerEntries.studioId, s.studioId));
    const balance = await balanceMs(db, s.studioId);
    expect(balance).toBe(Number(sum.total));
    // 5,000 granted + 4 × 1,000 bought − prepaid; never negative (arithmetic).
    expect(balance).toBe(5_000 + 4_000 - prepaid);
    expect(balance).toBeGreaterThanOrEqual(0);
    const entries = await db.select().from(ledgerEntries).where(eq(ledgerEntries.studioId, s.studioId));
    expect(entries.filter((e) => e.kind === "purchase")).toHaveLength(4);
    expect(entries.filter((e) => e.kind === "usage")).toHaveLength(chunks.length);
  });

  it("a finance user cannot start sweeps (403)", async () => {
    const s = await makeSweepStudio("Crateslide Ledger", 60 * 60_000);
    const res = await call(sweepsPost, { method: "POST", path: `/api/v1/studios/${s.studioId}/sweeps`, params: { studioId: s.studioId }, body: { spec: puckSpec() }, cookie: s.cookies.finance });
    expect(res.status).toBe(403);
    expect(errorOf(res.body).code).toBe("forbidden");
  });
});
