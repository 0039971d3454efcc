/**
 * Reconciliation over three billing periods with everything that goes wrong in between: a pack
 * partly refunded, a pack disputed and lost, an overage chunk whose meter event comes after its
 * period was invoiced, and an invoice whose card payment fails before it is paid. At the end the
 * ledger, the meter and the invoice lines agree to the millisecond and the cent, and the scheduled
 * reconciliation reports 0 differences.
 *
 * The three periods are closed on the fake's clock, which runs on the wall clock here (a period ends
 * once the clock's second has moved past its last chunk, polled, no fixed sleep): simulated periods
 * seconds long, not calendar months — what is checked is that each period's usage is billed once.
 */
import { describe, expect, it } from "vitest";
import { and, eq, sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { invoices, ledgerEntries, outbox } from "@/db/schema";
import { ensureOverageSubscription } from "@/lib/billing/catalog";
import { reconcileFinance, runScheduledFinanceReconcile } from "@/lib/billing/finance-ops";
import { deliverMeterEvent } from "@/lib/billing/meter";
import { OVERAGE_UNIT_AMOUNT_DECIMAL } from "@/lib/billing/packs";
import { METER_EVENT_KIND, recordChunkUsage } from "@/lib/billing/usage";
import { usageKey } from "@/lib/ledger/ledger";
import { balanceMs } from "@/lib/quotas/standing";
import { submitSweep } from "@/lib/queue/submit";
import { POST as checkoutPost } from "@/app/api/v1/studios/[studioId]/billing/checkout/route";
import { call } from "../../helpers/http";
import { makeSweepStudio, puckSpec, type TestStudio } from "../sweeps/support";
import { allowOverage, meterDispatcher, payOnHostedPage, billingTestFile, waitUntil, type BillingHarness } from "./support";

let db: Db;
let h: BillingHarness;
billingTestFile((file) => ({ db, h } = file));

async function buy(s: TestStudio, card: string): Promise<{ sessionId: string; charge: string }> {
  const res = await call(checkoutPost, { method: "POST", path: `/api/v1/studios/${s.studioId}/billing/checkout`, params: { studioId: s.studioId }, body: { packId: "pack_tapout" }, cookie: s.cookies.owner });
  const { sessionId } = res.body as { sessionId: string };
  expect((await payOnHostedPage(h.fake, sessionId, card)).status).toBe(200);
  await waitUntil(async () => (await db.select().from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, `purchase:${sessionId}`))).length === 1, "the purchase credit");
  const session = await h.stripe.checkout.sessions.retrieve(sessionId);
  const intent = await h.stripe.paymentIntents.retrieve(session.payment_intent as string);
  return { sessionId, charge: intent.latest_charge as string };
}

const ledgerSum = async (studioId: string, column: "computeMs" | "overageMs" | "amountCents", kind?: "purchase" | "refund" | "usage") => {
  const [row] = await db
    .select({ total: sql<string>`coalesce(sum(${ledgerEntries[column]}), 0)` })
    .from(ledgerEntries)
    .where(kind ? and(eq(ledgerEntries.studioId, studioId), eq(ledgerEntries.kind, kind)) : eq(ledgerEntries.studioId, studioId));
  return Number(row.total);
};

describe("three billing periods, reconciled", () => {
  it("ledger = meter = invoice lines to the ms and the cent after a refund, a lost dispute, a late meter event and a failed invoice payment", async () => {
    const s = await makeSweepStudio("Marrowlight Games", 0);
    await allowOverage(db, s.studioId);
    const account = await ensureOverageSubscription(db, h.stripe, s.studioId);
    const sweepId = (await submitSweep(db, s.studioId, { spec: puckSpec() })).id;
    const { dispatcher, advance } = meterDispatcher(db, h.stripe);
    const dispatch = () => {
      advance(60_000);
      return dispatcher.dispatchDue();
    };
    const debit = (chunkIndex: number, computeMs: number) => db.transaction((tx) => recordChunkUsage(tx, { studioId: s.studioId, sweepId, chunkIndex, computeMs, memo: `chunk ${chunkIndex}` }));
    const closeAfter = async (chunkIndex: number) => {
      const [entry] = await db.select({ createdAt: ledgerEntries.createdAt }).from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, usageKey(sweepId, chunkIndex)));
      const second = Math.floor(entry.createdAt.getTime() / 1000);
      await waitUntil(async () => h.fake.now() > second, "the clock's next second");
      const [invoice] = h.fake.closePeriod({ customer: account.stripeCustomerId });
      await h.fake.waitForWebhooks();
      return invoice;
    };

    // Packs: Tap-out is 120 min (7,200,000 ms) for 900 ¢ (pack table, lib/billing/packs.ts). One is
    // refunded 300 ¢ (⅓: 2,400,000 ms back); one is paid with Stripe's test card 4000 0000 0000 0259,
    // disputed, and lost (all 7,200,000 ms and 900 ¢ back).
    const refunded = await buy(s, "4242 4242 4242 4242");
    const disputed = await buy(s, "4000 0000 0000 0259");
    await h.stripe.refunds.create({ charge: refunded.charge, amount: 300 });
    const [dispute] = (await h.stripe.disputes.list({ charge: disputed.charge })).data;
    h.fake.closeDispute(dispute.id, "lost");
    await h.fake.waitForWebhooks();
    await waitUntil(async () => (await db.select().from(ledgerEntries).where(and(eq(ledgerEntries.studioId, s.studioId), eq(ledgerEntries.kind, "refund")))).length === 2, "the two take-backs");
    expect(await balanceMs(db, s.studioId)).toBe(7_200_000 * 2 - 2_400_000 - 7_200_000);

    // Period 1: the 4,800,000 ms left are used, then 600,000 ms of overage; a 120,000 ms chunk's meter event is held back.
    expect(await debit(0, 5_400_000)).toEqual({ billed: true, prepaidMs: 4_800_000, overageMs: 600_000 });
    await dispatch();
    expect(await debit(1, 120_000)).toMatchObject({ overageMs: 120_000 });
    const p1 = await closeAfter(1);
    // The late chunk's event arrives after period 1 was invoiced — twice.
    await dispatch();
    const lateRow = (await db.select().from(outbox).where(eq(outbox.idempotencyKey, `meter:${usageKey(sweepId, 1)}`)))[0];
    expect(lateRow.status).toBe("delivered");
    await deliverMeterEvent(db, h.stripe, lateRow);

    // Period 2: 300,000 ms; its invoice's card payment fails, then a good card pays it.
    expect(await debit(2, 300_000)).toMatchObject({ overageMs: 300_000 });
    await dispatch();
    const p2 = await closeAfter(2);
    h.fake.setDefaultCard(account.stripeCustomerId, "4000000000000002");
    await expect(h.stripe.invoices.pay(p2.id)).rejects.toMatchObject({ type: "StripeCardError" });
    h.fake.setDefaultCard(account.stripeCustomerId, "4242424242424242");
    expect((await h.stripe.invoices.pay(p2.id)).status).toBe("paid");
    await h.fake.waitForWebhooks();

    // Period 3: 60,000 ms.
    expect(await debit(3, 60_000)).toMatchObject({ overageMs: 60_000 });
    await dispatch();
    const p3 = await closeAfter(3);

    // Milliseconds: every overage ms of the ledger on exactly one invoice line, and delivered to Stripe once.
    // (Pack purchases have their own paid invoices, kind "pack": minutes credited by the purchase, not metered.)
    const mirrors = await db.select().from(invoices).where(and(eq(invoices.studioId, s.studioId), eq(invoices.kind, "overage")));
    expect(mirrors.map((m) => m.id).sort()).toEqual([p1.id, p2.id, p3.id].sort());
    const lines = mirrors.flatMap((m) => m.lines);
    const ledgerOverage = await ledgerSum(s.studioId, "overageMs");
    expect(ledgerOverage).toBe(600_000 + 120_000 + 300_000 + 60_000);
    expect(lines.reduce((sum, l) => sum + l.quantityMs, 0)).toBe(ledgerOverage);
    const [metered] = await db
      .select({ total: sql<string>`coalesce(sum((${outbox.payload}->>'valueMs')::bigint), 0)` })
      .from(outbox)
      .where(and(eq(outbox.studioId, s.studioId), eq(outbox.kind, METER_EVENT_KIND), eq(outbox.status, "delivered")));
    expect(Number(metered.total)).toBe(ledgerOverage);
    expect(lines.filter((l) => l.meterIdentifier).map((l) => [l.meterIdentifier, l.quantityMs])).toEqual([[usageKey(sweepId, 1), 120_000]]);

    // Cents: each line is its ms × 0.00015 ¢ rounded once (the overage price, lib/billing/packs.ts);
    // 600,000 → 90, 120,000 → 18, 300,000 → 45, 60,000 → 9.
    for (const l of lines) expect(l.amountCents).toBe(Math.round(l.quantityMs * Number(OVERAGE_UNIT_AMOUNT_DECIMAL)));
    const byId = new Map(mirrors.map((m) => [m.id, m]));
    expect([byId.get(p1.id)!.totalCents, byId.get(p2.id)!.totalCents, byId.get(p3.id)!.totalCents]).toEqual([90, 45 + 18, 9]);
    expect([byId.get(p1.id)!.status, byId.get(p2.id)!.status, byId.get(p3.id)!.status]).toEqual(["open", "paid", "open"]);

    // Pack money and minutes: the ledger against Stripe's charges, refunds and lost dispute.
    const chargeA = await h.stripe.charges.retrieve(refunded.charge);
    const chargeB = await h.stripe.charges.retrieve(disputed.charge);
    const keptAtStripe = chargeA.amount - chargeA.amount_refunded + (chargeB.amount - dispute.amount);
    expect(keptAtStripe).toBe(600);
    expect((await ledgerSum(s.studioId, "amountCents", "purchase")) + (await ledgerSum(s.studioId, "amountCents", "refund"))).toBe(keptAtStripe);
    expect(await balanceMs(db, s.studioId)).toBe(0);

    // The scheduled reconciliation finds nothing to report.
    expect(await reconcileFinance(db)).toMatchObject({ periodsChecked: 3, differences: [], failedMeterEvents: 0, alerted: 0 });
    expect(await runScheduledFinanceReconcile(db, new Date())).toMatchObject({ differences: [], failedMeterEvents: 0, alerted: 0 });
  });
});
