/**
 * Unpaid overage invoices: a failed payment, an overdue invoice and one marked uncollectible each
 * mail owners and finance once (amount and the link to pay); OVERDUE_GRACE_DAYS after the due date
 * overage is held off until the invoice is paid, then back on as the studio had it; a cancelled
 * subscription is forgotten and replaced. Events delivered twice, out of order and concurrently.
 *
 * The grace period is judged at times derived from the invoice's own due date (set by the fake's
 * clock, which runs on the wall clock like the database): no fixed dates.
 */
import { describe, expect, it } from "vitest";
import { and, eq, like } from "drizzle-orm";
import type Stripe from "stripe";
import type { Db } from "@/db/client";
import { invoices, outbox, stripeEvents, studioBilling } from "@/db/schema";
import { appBaseUrl } from "@/lib/auth/config";
import { ensureOverageSubscription, METER_CUSTOMER_KEY, METER_EVENT_NAME, METER_VALUE_KEY } from "@/lib/billing/catalog";
import { databaseNow, OVERDUE_GRACE_DAYS, overageHold, payLink } from "@/lib/billing/overdue";
import { billingSummary } from "@/lib/billing/queries";
import { recordChunkUsage } from "@/lib/billing/usage";
import { effectiveQuotas } from "@/lib/quotas/plan";
import { studioStanding } from "@/lib/quotas/enforce";
import { makeSweepStudio, type TestStudio } from "../sweeps/support";
import { allowOverage, usageSweep, billingTestFile, type BillingHarness } from "./support";

let db: Db;
let h: BillingHarness;
billingTestFile((file) => ({ db, h } = file));

const DAY_MS = 86_400_000;



/** An open overage invoice of `valueMs` for a fresh studio (send_invoice: due OVERAGE_DAYS_UNTIL_DUE days after it is issued). */
async function openInvoice(name: string, valueMs: number): Promise<{ s: TestStudio; customer: string; invoice: Stripe.Invoice }> {
  const s = await makeSweepStudio(name, 0);
  await allowOverage(db, s.studioId);
  const account = await ensureOverageSubscription(db, h.stripe, s.studioId);
  await h.stripe.billing.meterEvents.create({ event_name: METER_EVENT_NAME, identifier: `overdue-${s.studioId}`, timestamp: h.fake.now(), payload: { [METER_CUSTOMER_KEY]: account.stripeCustomerId, [METER_VALUE_KEY]: String(valueMs) } });
  h.fake.advanceClock(h.fake.now() + 5);
  const [issued] = h.fake.closePeriod({ customer: account.stripeCustomerId });
  await h.fake.waitForWebhooks();
  return { s, customer: account.stripeCustomerId, invoice: await h.stripe.invoices.retrieve(issued.id) };
}

const mailsLike = (pattern: string) => db.select().from(outbox).where(and(eq(outbox.kind, "mail"), like(outbox.idempotencyKey, pattern)));
const mirror = async (id: string) => (await db.select().from(invoices).where(eq(invoices.id, id)))[0];

async function eventIds(objectId: string, type: string): Promise<string[]> {
  const ids: string[] = [];
  for await (const e of h.stripe.events.list({ limit: 100, type })) if ((e.data.object as { id: string }).id === objectId) ids.push(e.id);
  return ids;
}

describe("a failed and then overdue overage invoice", () => {
  it("mails owners and finance once each with the amount and the pay link, holds overage off after the grace period, and pays it back on", async () => {
    // 600,000 ms = 10 minutes at 9 cents a minute = 90 cents (the price list, lib/billing/packs.ts).
    const { s, customer, invoice } = await openInvoice("Brackwater Forge", 600_000);
    expect(invoice.status).toBe("open");
    expect(invoice.amount_due).toBe(90);
    expect(invoice.due_date).not.toBeNull();

    // The card on file is declined (Stripe's test card 4000 0000 0000 0002): invoice.payment_failed.
    h.fake.setDefaultCard(customer, "4000000000000002");
    await expect(h.stripe.invoices.pay(invoice.id!)).rejects.toMatchObject({ type: "StripeCardError" });
    await h.fake.waitForWebhooks();
    const failed = await eventIds(invoice.id!, "invoice.payment_failed");
    expect(failed).toHaveLength(1);
    // Twice more, and concurrently: still one mail per person.
    await h.fake.deliverEvents(failed);
    await h.fake.deliverConcurrently([...failed, ...failed]);
    const failMails = await mailsLike(`mail:invoice-payment_failed:${invoice.id}:%`);
    expect(failMails.map((m) => (m.payload as { to: string }).to).sort()).toEqual([s.owner.email, s.finance.email].sort());
    const link = payLink(await h.stripe.invoices.retrieve(invoice.id!), `${appBaseUrl()}/studios/${encodeURIComponent(s.studioId)}/billing`);
    for (const m of failMails) {
      const text = (m.payload as { text: string }).text;
      expect(text).toContain("$0.90");
      expect(text).toContain(link);
    }

    // The mirror keeps the due date; before it, nothing is overdue and overage stays on.
    const row = await mirror(invoice.id!);
    expect(row.status).toBe("open");
    expect(row.dueAt?.getTime()).toBe(invoice.due_date! * 1000);
    const dueAt = row.dueAt!;
    const before = await overageHold(db, s.studioId, new Date(dueAt.getTime() - 1000));
    expect(before).toMatchObject({ suspended: false, graceDays: OVERDUE_GRACE_DAYS });
    expect(before.unpaid).toMatchObject([{ id: invoice.id, overdue: false, overageOffAt: new Date(dueAt.getTime() + OVERDUE_GRACE_DAYS * DAY_MS).toISOString() }]);

    // Within the grace period overage still accrues; past it (the database's clock), none does and sweeps see it off.
    const sweepId = await usageSweep(db, s.studioId);
    const inGrace = new Date(dueAt.getTime() + (OVERDUE_GRACE_DAYS - 1) * DAY_MS);
    const pastGrace = new Date(dueAt.getTime() + OVERDUE_GRACE_DAYS * DAY_MS);
    expect((await overageHold(db, s.studioId, inGrace)).suspended).toBe(false);
    expect(await db.transaction((tx) => recordChunkUsage(tx, { studioId: s.studioId, sweepId, chunkIndex: 0, computeMs: 1_000, memo: "in grace", at: inGrace }))).toEqual({ billed: true, prepaidMs: 0, overageMs: 1_000 });
    expect((await overageHold(db, s.studioId, pastGrace)).suspended).toBe(true);
    expect(await db.transaction((tx) => recordChunkUsage(tx, { studioId: s.studioId, sweepId, chunkIndex: 1, computeMs: 1_000, memo: "past grace", at: pastGrace }))).toEqual({ billed: true, prepaidMs: 0, overageMs: 0 });
    expect((await studioStanding(db, s.studioId, pastGrace)).quotas.overageAllowed).toBe(false);

    // The fake clock passes the due date: Stripe says nothing yet (its overdue automation is set to the
    // grace period), and on the database's clock the invoice is not even due: overage stays on.
    h.fake.advanceClock(invoice.due_date! + 60);
    await h.fake.waitForWebhooks();
    expect(await eventIds(invoice.id!, "invoice.overdue")).toEqual([]);
    expect((await overageHold(db, s.studioId)).suspended).toBe(false);

    // The fake clock passes the due date plus the grace period: invoice.overdue, one mail each. Stripe's
    // notice starts the hold on its own clock, though the database's clock is still before the due date.
    h.fake.advanceClock(invoice.due_date! + OVERDUE_GRACE_DAYS * 86_400 + 60);
    await h.fake.waitForWebhooks();
    const overdue = await eventIds(invoice.id!, "invoice.overdue");
    expect(overdue).toHaveLength(1);
    await h.fake.deliverConcurrently([...overdue, ...overdue, ...overdue]);
    const overdueMails = await mailsLike(`mail:invoice-overdue:${invoice.id}:%`);
    expect(overdueMails).toHaveLength(2);
    expect((overdueMails[0].payload as { text: string }).text).toContain("overage is switched off for Brackwater Forge until it is paid");
    const noticed = (await mirror(invoice.id!)).overdueNoticeAt!;
    expect(noticed).toBeInstanceOf(Date);
    const now = await databaseNow(db);
    expect(now.getTime()).toBeLessThan(dueAt.getTime());
    const held = await overageHold(db, s.studioId);
    expect(held.suspended).toBe(true);
    expect(held.unpaid).toMatchObject([{ id: invoice.id, overageOff: true, overageOffAt: noticed.toISOString() }]);
    expect((await studioStanding(db, s.studioId)).quotas.overageAllowed).toBe(false);
    expect((await billingSummary(db, s.studioId)).overage).toMatchObject({ allowed: true, held: true });
    expect(await db.transaction((tx) => recordChunkUsage(tx, { studioId: s.studioId, sweepId, chunkIndex: 3, computeMs: 1_000, memo: "after Stripe's notice" }))).toEqual({ billed: true, prepaidMs: 0, overageMs: 0 });
    // The studio's own choice is untouched.
    expect((await effectiveQuotas(db, s.studioId)).overageAllowed).toBe(true);

    // Paid with a good card: overage is back on at the same instant, with no state to undo.
    h.fake.setDefaultCard(customer, "4242424242424242");
    expect((await h.stripe.invoices.pay(invoice.id!)).status).toBe("paid");
    await h.fake.waitForWebhooks();
    expect((await mirror(invoice.id!)).status).toBe("paid");
    expect((await overageHold(db, s.studioId, pastGrace)).suspended).toBe(false);
    expect((await overageHold(db, s.studioId)).suspended).toBe(false);
    expect((await studioStanding(db, s.studioId, pastGrace)).quotas.overageAllowed).toBe(true);
    expect((await studioStanding(db, s.studioId)).quotas.overageAllowed).toBe(true);
    expect(await db.transaction((tx) => recordChunkUsage(tx, { studioId: s.studioId, sweepId, chunkIndex: 2, computeMs: 1_000, memo: "paid", at: pastGrace }))).toEqual({ billed: true, prepaidMs: 0, overageMs: 1_000 });

    // The old failure and overdue events arrive again after the payment, reversed and concurrently:
    // the invoice stays paid and nobody is told again.
    await h.fake.deliverEvents([...overdue, ...failed]);
    await h.fake.deliverConcurrently([...failed, ...overdue]);
    expect(await mirror(invoice.id!)).toMatchObject({ status: "paid", overdueNoticeAt: noticed });
    expect(await mailsLike(`mail:invoice-payment_failed:${invoice.id}:%`)).toHaveLength(2);
    expect(await mailsLike(`mail:invoice-overdue:${invoice.id}:%`)).toHaveLength(2);
    expect((await billingSummary(db, s.studioId)).overage).toMatchObject({ allowed: true, held: false, unpaidInvoices: [] });
  });

  it("the Billing summary names the unpaid invoice, its due date and the day overage goes off, by the database's clock", async () => {
    const { s, invoice } = await openInvoice("Saltmarsh Kiln", 1_200_000);
    const summary = await billingSummary(db, s.studioId);
    const dueAt = new Date(invoice.due_date! * 1000);
    expect(summary.overage).toMatchObject({
      allowed: true,
      held: false,
      graceDays: OVERDUE_GRACE_DAYS,
      unpaidInvoices: [{ id: invoice.id, totalCents: 180, dueAt: dueAt.toISOString(), overageOffAt: new Date(dueAt.getTime() + OVERDUE_GRACE_DAYS * DAY_MS).toISOString() }],
    });
    // The default "now" is the database's: the invoice was issued on the fake clock now, due in the future.
    const now = await databaseNow(db);
    expect(dueAt.getTime()).toBeGreaterThan(now.getTime());
    expect(summary.overage.unpaidInvoices[0].overdue).toBe(false);
  });
});

describe("an invoice marked uncollectible", () => {
  it("is mirrored, mails once, still holds overage off past the grace period, and can still be paid", async () => {
    const { s, customer, invoice } = await openInvoice("Peatbog Arcade", 600_000);
    await h.stripe.invoices.markUncollectible(invoice.id!);
    await h.fake.waitForWebhooks();
    const marked = await eventIds(invoice.id!, "invoice.marked_uncollectible");
    expect(marked).toHaveLength(1);
    await h.fake.deliverConcurrently([...marked, ...marked]);
    expect((await mirror(invoice.id!)).status).toBe("uncollectible");
    expect(await mailsLike(`mail:invoice-uncollectible:${invoice.id}:%`)).toHaveLength(2);
    const pastGrace = new Date(invoice.due_date! * 1000 + OVERDUE_GRACE_DAYS * DAY_MS);
    expect((await overageHold(db, s.studioId, pastGrace)).suspended).toBe(true);

    h.fake.setDefaultCard(customer, "4242424242424242");
    expect((await h.stripe.invoices.pay(invoice.id!)).status).toBe("paid");
    await h.fake.waitForWebhooks();
    await h.fake.deliverEvents(marked);
    expect((await mirror(invoice.id!)).status).toBe("paid");
    expect((await overageHold(db, s.studioId, pastGrace)).suspended).toBe(false);
  });

  it("arriving only after the payment (out of order) mirrors paid and tells nobody", async () => {
    const { s, customer, invoice } = await openInvoice("Cinderfen Works", 600_000);
    await h.stripe.webhookEndpoints.update(h.fake.webhookEndpointId!, { disabled: true });
    try {
      await h.stripe.invoices.markUncollectible(invoice.id!);
      h.fake.setDefaultCard(customer, "4242424242424242");
      await h.stripe.invoices.pay(invoice.id!);
    } finally {
      await h.stripe.webhookEndpoints.update(h.fake.webhookEndpointId!, { disabled: false });
    }
    const marked = await eventIds(invoice.id!, "invoice.marked_uncollectible");
    const paid = await eventIds(invoice.id!, "invoice.paid");
    expect(marked).toHaveLength(1);
    expect(paid).toHaveLength(1);
    // Newest first, then all at once again.
    await h.fake.deliverEvents([...paid, ...marked]);
    await h.fake.deliverConcurrently([...marked, ...paid]);
    expect((await mirror(invoice.id!)).status).toBe("paid");
    expect(await mailsLike(`mail:invoice-uncollectible:${invoice.id}:%`)).toHaveLength(0);
    const [recorded] = await db.select().from(stripeEvents).where(eq(stripeEvents.id, marked[0]));
    expect(recorded.outcome).toMatch(/nobody told|kept invoice/);
    expect((await overageHold(db, s.studioId, new Date(invoice.due_date! * 1000 + OVERDUE_GRACE_DAYS * DAY_MS))).suspended).toBe(false);
  });
});

describe("customer.subscription.deleted", () => {
  it("forgets the ended subscription once, tells owners and finance, and the next overage starts a new one", async () => {
    const s = await makeSweepStudio("Gorse Lantern Games", 0);
    const first = await ensureOverageSubscription(db, h.stripe, s.studioId);
    await h.stripe.subscriptions.cancel(first.stripeSubscriptionId!);
    await h.fake.waitForWebhooks();
    const deleted = await eventIds(first.stripeSubscriptionId!, "customer.subscription.deleted");
    expect(deleted).toHaveLength(1);
    await h.fake.deliverEvents(deleted);
    await h.fake.deliverConcurrently([...deleted, ...deleted]);
    const [row] = await db.select().from(studioBilling).where(eq(studioBilling.studioId, s.studioId));
    expect(row).toMatchObject({ stripeSubscriptionId: null, endedSubscriptionId: first.stripeSubscriptionId, subscriptionStartedAt: first.subscriptionStartedAt });
    expect(await mailsLike(`mail:subscription-ended:${first.stripeSubscriptionId}:%`)).toHaveLength(2);
    const [recorded] = await db.select().from(stripeEvents).where(eq(stripeEvents.id, deleted[0]));
    expect(recorded.outcome).toMatch(/ended/);

    const second = await ensureOverageSubscription(db, h.stripe, s.studioId);
    expect(second.stripeSubscriptionId).not.toBe(first.stripeSubscriptionId);
    expect((await h.stripe.subscriptions.retrieve(second.stripeSubscriptionId!)).status).toBe("active");
    expect(second.stripeCustomerId).toBe(first.stripeCustomerId);
    // The ended subscription's event once more changes nothing: the new one stays.
    await h.fake.deliverEvents(deleted);
    const [after] = await db.select().from(studioBilling).where(eq(studioBilling.studioId, s.studioId));
    expect(after.stripeSubscriptionId).toBe(second.stripeSubscriptionId);
  });
});
