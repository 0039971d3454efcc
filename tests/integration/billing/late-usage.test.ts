/**
 * No usage lost or billed twice: an overage chunk debited before its period's invoice was issued but
 * delivered after it (an outage, a retry backlog) is billed on the next invoice as a line of its own
 * naming the period it belongs to — once, however often it is delivered — and every overage
 * millisecond of the ledger is on exactly one invoice line across the two periods.
 *
 * Periods are closed on the fake's clock, which here runs on the wall clock (no offset): a chunk
 * belongs to the period of its ledger time, so the test waits (a polled condition, no fixed sleep)
 * for the wall clock's second to move past a chunk before closing its period.
 */
import { describe, expect, it } from "vitest";
import { and, eq, like } from "drizzle-orm";
import type { Db } from "@/db/client";
import { invoices, ledgerEntries, outbox, type OutboxRow } from "@/db/schema";
import { ensureOverageSubscription } from "@/lib/billing/catalog";
import { deliverMeterEvent } from "@/lib/billing/meter";
import { invoiceDetail, platformFinance } from "@/lib/billing/queries";
import { METER_EVENT_KIND, recordChunkUsage } from "@/lib/billing/usage";
import { usageKey } from "@/lib/ledger/ledger";
import { makeSweepStudio } from "../sweeps/support";
import { allowOverage, meterDispatcher, usageSweep, billingTestFile, waitUntil, type BillingHarness } from "./support";

let db: Db;
let h: BillingHarness;
billingTestFile((file) => ({ db, h } = file));


/** Polls until the wall clock's unix second is past the chunk's ledger time, so a period closed now ends after it. */
async function pastSecondOf(key: string): Promise<void> {
  const [entry] = await db.select({ createdAt: ledgerEntries.createdAt }).from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, key));
  const second = Math.floor(entry.createdAt.getTime() / 1000);
  await waitUntil(async () => Math.floor(Date.now() / 1000) > second && h.fake.now() > second, "the wall clock's next second");
}

const meterRow = async (key: string): Promise<OutboxRow> => (await db.select().from(outbox).where(and(eq(outbox.kind, METER_EVENT_KIND), eq(outbox.idempotencyKey, `meter:${key}`))))[0];

describe("overage delivered after its period was invoiced", () => {
  it("is billed once on the next invoice as its own line naming its period; every ms on exactly one line", async () => {
    const s = await makeSweepStudio("Fogbank Interactive", 0);
    await allowOverage(db, s.studioId);
    const account = await ensureOverageSubscription(db, h.stripe, s.studioId);
    const sweepId = await usageSweep(db, s.studioId);
    const { dispatcher, advance } = meterDispatcher(db, h.stripe);
    // The dispatcher's clock is the test's: moved on so rows written since are due.
    const dispatch = () => {
      advance(60_000);
      return dispatcher.dispatchDue();
    };
    const debit = (chunkIndex: number, computeMs: number) => db.transaction((tx) => recordChunkUsage(tx, { studioId: s.studioId, sweepId, chunkIndex, computeMs, memo: `chunk ${chunkIndex}` }));

    // Period 1: chunk 0 metered in time; chunk 1 debited but its meter event held back (an outage).
    expect(await debit(0, 600_000)).toEqual({ billed: true, prepaidMs: 0, overageMs: 600_000 });
    await dispatch();
    expect((await meterRow(usageKey(sweepId, 0))).status).toBe("delivered");
    expect(await debit(1, 120_000)).toEqual({ billed: true, prepaidMs: 0, overageMs: 120_000 });
    await pastSecondOf(usageKey(sweepId, 1));
    const [first] = h.fake.closePeriod({ customer: account.stripeCustomerId });
    await h.fake.waitForWebhooks();
    // 600,000 ms at 9 cents a minute (0.00015 cents/ms, the price list in lib/billing/packs.ts) = 90 cents.
    expect(first.total).toBe(90);
    const firstLine = (first.lines as { data: Array<{ period: { start: number; end: number } }> }).data[0];

    // The held-back event is delivered now — and again, and twice at once (a retried worker).
    const late = await meterRow(usageKey(sweepId, 1));
    expect(late.status).toBe("pending");
    await dispatch();
    const delivered = await meterRow(usageKey(sweepId, 1));
    expect(delivered.status).toBe("delivered");
    await deliverMeterEvent(db, h.stripe, delivered);
    await Promise.all([deliverMeterEvent(db, h.stripe, late), deliverMeterEvent(db, h.stripe, late)]);
    const items = [];
    for await (const item of h.stripe.invoiceItems.list({ customer: account.stripeCustomerId, limit: 100 })) items.push(item);
    expect(items).toHaveLength(1);
    expect(items[0]).toMatchObject({ quantity: 120_000, amount: 18, period: firstLine.period, invoice: null });
    expect((await meterRow(usageKey(sweepId, 1))).payload).toMatchObject({ lateInvoiceItem: items[0].id });

    // Period 2: chunk 2 in time; then the period closes.
    expect(await debit(2, 60_000)).toEqual({ billed: true, prepaidMs: 0, overageMs: 60_000 });
    await dispatch();
    await pastSecondOf(usageKey(sweepId, 2));
    const [second] = h.fake.closePeriod({ customer: account.stripeCustomerId });
    await h.fake.waitForWebhooks();
    // 60,000 ms → 9 cents; the late 120,000 ms → 18 cents, on its own line.
    expect(second.total).toBe(27);

    const [mirror1] = await db.select().from(invoices).where(eq(invoices.id, first.id));
    const [mirror2] = await db.select().from(invoices).where(eq(invoices.id, second.id));
    expect(mirror1.lines.map((l) => l.quantityMs)).toEqual([600_000]);
    const lateLine = mirror2.lines.find((l) => l.meterIdentifier);
    expect(lateLine).toMatchObject({ meterIdentifier: usageKey(sweepId, 1), quantityMs: 120_000, amountCents: 18, periodStart: firstLine.period.start, periodEnd: firstLine.period.end });
    expect(lateLine!.description).toMatch(/^Late overage of \d{4}-\d{2}-\d{2} – \d{4}-\d{2}-\d{2} \(UTC\)/);
    // The invoice's own period is period 2, not widened by the late line.
    expect(mirror2.periodStart.getTime()).toBe(firstLine.period.end * 1000);

    // Every ledger overage ms on exactly one line: 600,000 + 120,000 + 60,000.
    const ledgerOverage = (await db.select().from(ledgerEntries).where(eq(ledgerEntries.studioId, s.studioId))).reduce((sum, e) => sum + e.overageMs, 0);
    const invoiced = [...mirror1.lines, ...mirror2.lines].reduce((sum, l) => sum + l.quantityMs, 0);
    expect(ledgerOverage).toBe(780_000);
    expect(invoiced).toBe(ledgerOverage);
    const d1 = await invoiceDetail(db, s.studioId, first.id);
    const d2 = await invoiceDetail(db, s.studioId, second.id);
    expect(d1.reconciled).toBe(true);
    expect(d2.reconciled).toBe(true);
    expect(d2.lines.find((l) => l.meterIdentifier)?.entries.map((e) => e.chunkIndex)).toEqual([1]);
    const finance = (await platformFinance(db)).periods.filter((p) => p.studioId === s.studioId);
    expect(finance).toHaveLength(2);
    for (const p of finance) expect(p).toMatchObject({ reconciled: true, ledgerMs: p.invoicedMs, meteredMs: p.invoicedMs });
    expect(finance.reduce((sum, p) => sum + p.invoicedMs, 0)).toBe(780_000);
    expect(finance.reduce((sum, p) => sum + p.totalCents, 0)).toBe(90 + 27);

    // Nothing left pending at Stripe to be billed a third time.
    const pending = await h.stripe.invoiceItems.list({ customer: account.stripeCustomerId, pending: true });
    expect(pending.data).toHaveLength(0);
    expect(await db.select().from(outbox).where(and(eq(outbox.kind, METER_EVENT_KIND), like(outbox.idempotencyKey, `meter:%${sweepId}%`), eq(outbox.status, "pending")))).toHaveLength(0);
  });

  it("a delivery whose first attempt reached Stripe in time (its answer lost) is not billed again late", async () => {
    const s = await makeSweepStudio("Lowtide Foundry", 0);
    await allowOverage(db, s.studioId);
    const account = await ensureOverageSubscription(db, h.stripe, s.studioId);
    const sweepId = await usageSweep(db, s.studioId);
    expect(await db.transaction((tx) => recordChunkUsage(tx, { studioId: s.studioId, sweepId, chunkIndex: 0, computeMs: 300_000, memo: "chunk 0" }))).toMatchObject({ overageMs: 300_000 });
    const row = await meterRow(usageKey(sweepId, 0));
    // The attempt lands at Stripe, but the outbox never hears (the row stays pending).
    await deliverMeterEvent(db, h.stripe, row);
    await pastSecondOf(usageKey(sweepId, 0));
    const [issued] = h.fake.closePeriod({ customer: account.stripeCustomerId });
    // 300,000 ms → 45 cents, on the period's own line.
    expect(issued.total).toBe(45);
    // The retry comes after the period was invoiced: Stripe already holds the identifier, so no late line.
    await deliverMeterEvent(db, h.stripe, row);
    const items = await h.stripe.invoiceItems.list({ customer: account.stripeCustomerId });
    expect(items.data).toHaveLength(0);
    expect((await meterRow(usageKey(sweepId, 0))).payload).toMatchObject({ countedInPeriod: true });
  });
});
