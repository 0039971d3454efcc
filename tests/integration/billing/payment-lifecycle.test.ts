/**
 * The money lifecycle past the happy path: every signed event answered 2xx, delayed (bank) payments
 * credited when they settle and reported when they fail, the return page's "check my payment" and the
 * scheduled reconcile crediting what a missed webhook lost, and invoice statuses that only move
 * forward — with events delivered twice, out of order and concurrently.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq, like } from "drizzle-orm";
import { getDb, type Db } from "@/db/client";
import { invoices, ledgerEntries, outbox, stripeEvents } from "@/db/schema";
import { signatureHeader } from "@/lib/fakes/stripe";
import { ensureOverageSubscription, METER_CUSTOMER_KEY, METER_EVENT_NAME, METER_VALUE_KEY } from "@/lib/billing/catalog";
import { CHECKOUT_RECONCILE_KIND, reconcileRecentCheckouts, runScheduledCheckoutReconcile, scheduleCheckoutReconcile } from "@/lib/billing/payments";
import { invoiceStatusMayMove, syncInvoice } from "@/lib/billing/webhook";
import { OutboxDispatcher } from "@/lib/outbox/outbox";
import { POST as checkoutPost } from "@/app/api/v1/studios/[studioId]/billing/checkout/route";
import { POST as checkPost } from "@/app/api/v1/studios/[studioId]/billing/checkout/[sessionId]/route";
import { POST as webhookPost } from "@/app/api/v1/stripe/webhook/route";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { call, errorOf } from "../../helpers/http";
import { makeSweepStudio, type TestStudio } from "../sweeps/support";
import { ledgerSnapshot, payOnHostedPage, startBillingHarness, waitUntil, type BillingHarness } from "./support";

let db: Db;
let h: BillingHarness;
let s: TestStudio;

beforeAll(async () => {
  db = await useFreshDb();
  h = await startBillingHarness();
  s = await makeSweepStudio("Tidewrack Interactive", 0);
});
afterAll(async () => {
  await h.close();
  await closeTestDb();
});

async function startCheckout(packId = "pack_tapout", studio: TestStudio = s): Promise<string> {
  const res = await call(checkoutPost, { method: "POST", path: `/api/v1/studios/${studio.studioId}/billing/checkout`, params: { studioId: studio.studioId }, body: { packId }, cookie: studio.cookies.owner });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return (res.body as { sessionId: string }).sessionId;
}

/** Pays on the fake's hosted page with one of Stripe's test bank accounts (a delayed method). */
async function payByBank(sessionId: string, accountNumber: string) {
  const res = await fetch(`${h.fake.url}/c/pay/${sessionId}`, {
    method: "POST",
    headers: { "content-type": "application/x-www-form-urlencoded", accept: "application/json" },
    body: new URLSearchParams({ account_number: accountNumber, email: "ledger@tidewrack.test" }).toString(),
  });
  return { status: res.status, body: (await res.json()) as Record<string, unknown> };
}

async function checkMyPayment(sessionId: string, cookie = s.cookies.finance, studioId = s.studioId) {
  return call(checkPost, { method: "POST", path: `/api/v1/studios/${studioId}/billing/checkout/${sessionId}`, params: { studioId, sessionId }, cookie });
}

const purchases = (sessionId: string) => db.select().from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, `purchase:${sessionId}`));

async function eventsOf(objectId: string, type?: string) {
  const all = [];
  for await (const e of h.stripe.events.list({ limit: 100, ...(type ? { type } : {}) })) if ((e.data.object as { id: string }).id === objectId) all.push(e);
  return all.reverse(); // oldest first
}

async function postSigned(body: string) {
  return call(webhookPost, { method: "POST", path: "/api/v1/stripe/webhook", body, headers: { "stripe-signature": signatureHeader(body, h.fake.webhookSecret!, Math.floor(Date.now() / 1000)) } });
}

async function setEndpointEnabled(enabled: boolean) {
  await h.stripe.webhookEndpoints.update(h.fake.webhookEndpointId!, { disabled: !enabled });
}

describe("every signed event is answered 2xx", () => {
  it("acknowledges an event type Kickdrift does not act on (200, recorded once) and changes nothing else", async () => {
    const before = await ledgerSnapshot(s.studioId);
    const body = JSON.stringify({ id: "evt_ack_charge_1", object: "event", type: "customer.tax_id.created", data: { object: { id: "txi_123" } } });
    const first = await postSigned(body);
    const again = await postSigned(body);
    expect(first.status).toBe(200);
    expect(first.body).toMatchObject({ received: true, duplicate: false });
    expect(again.body).toMatchObject({ received: true, duplicate: true });
    const recorded = await db.select().from(stripeEvents).where(eq(stripeEvents.id, "evt_ack_charge_1"));
    expect(recorded).toHaveLength(1);
    const after = await ledgerSnapshot(s.studioId);
    expect({ ...after, events: after.events - 1 }).toEqual(before);
  });

  it("answers 200 for a signed event whose object Stripe no longer has, and still refuses what is not an event", async () => {
    const gone = await postSigned(JSON.stringify({ id: "evt_gone_1", type: "checkout.session.completed", data: { object: { id: "cs_test_nowhere" } } }));
    expect(gone.status).toBe(200);
    expect((gone.body as { outcome: string }).outcome).toMatch(/^ignored: Stripe has no object/);
    const shapeless = await postSigned(JSON.stringify({ id: "evt_shape_9", type: "invoice.paid", data: {} }));
    expect(shapeless.status).toBe(400);
    expect(errorOf(shapeless.body).field).toBe("data.object");
  });
});

describe("delayed payment methods", () => {
  it("credits a bank payment once when it settles, whatever order and however often its events arrive", async () => {
    const sessionId = await startCheckout("pack_rebound");
    const paid = await payByBank(sessionId, "000123456789");
    expect(paid.status, JSON.stringify(paid.body)).toBe(200);
    await h.fake.waitForWebhooks();
    // Completed but unpaid: nothing credited, and the return page says so instead of "Payment received".
    expect(await purchases(sessionId)).toHaveLength(0);
    const pending = await checkMyPayment(sessionId);
    expect(pending.status).toBe(200);
    expect(pending.body).toMatchObject({ state: "processing", creditedMs: 0, amountCents: 4500 });

    h.fake.settleDelayedPayments();
    await waitUntil(async () => (await purchases(sessionId)).length === 1, "the settled bank payment's credit");
    const before = await ledgerSnapshot(s.studioId);
    const ids = (await eventsOf(sessionId)).map((e) => e.id);
    expect((await eventsOf(sessionId)).map((e) => e.type)).toEqual(["checkout.session.completed", "checkout.session.async_payment_succeeded"]);
    // Twice, newest first, then all at once.
    await h.fake.deliverEvents([...ids].reverse());
    await h.fake.deliverEvents(ids);
    const concurrent = await h.fake.deliverConcurrently([...ids, ...ids, ...ids]);
    expect(concurrent.every((a) => a.status === 200)).toBe(true);
    const [entry] = await purchases(sessionId);
    // 750 minutes × 60,000 ms = 45,000,000 ms for 4,500 ¢ (the pack table in lib/billing/packs.ts).
    expect(await purchases(sessionId)).toHaveLength(1);
    expect(entry).toMatchObject({ kind: "purchase", computeMs: 45_000_000, amountCents: 4500 });
    expect((await ledgerSnapshot(s.studioId)).balanceMs).toBe(before.balanceMs);
    expect((await checkMyPayment(sessionId)).body).toMatchObject({ state: "credited", creditedMs: 45_000_000 });
  });

  it("reports a bank payment that fails: nothing credited, the buyer, owners and finance told once each", async () => {
    const sessionId = await startCheckout("pack_tapout");
    expect((await payByBank(sessionId, "000111111116")).status).toBe(200);
    h.fake.settleDelayedPayments();
    await h.fake.waitForWebhooks();
    const ids = (await eventsOf(sessionId)).map((e) => e.id);
    await h.fake.deliverConcurrently([...ids, ...ids]);
    expect(await purchases(sessionId)).toHaveLength(0);
    const mails = await db.select().from(outbox).where(like(outbox.idempotencyKey, `mail:payment-failed:${sessionId}:%`));
    const recipients = mails.map((m) => (m.payload as { to: string }).to).sort();
    // The buyer is the owner who started the checkout: told once, not twice.
    expect(recipients).toEqual([s.owner.email, s.finance.email].sort());
    expect((mails[0].payload as { subject: string }).subject).toBe("Payment failed: Tap-out pack for Tidewrack Interactive");
    const check = await checkMyPayment(sessionId);
    expect(check.body).toMatchObject({ state: "failed", creditedMs: 0 });
    expect((check.body as { message: string }).message).toContain("could not be located");
  });

  it("refuses a bank account that is not one of the test accounts, naming the field", async () => {
    const sessionId = await startCheckout();
    const res = await payByBank(sessionId, "12345");
    expect(res.status).toBe(400);
    expect((res.body.error as { param: string }).param).toBe("account_number");
  });
});

describe("a missed webhook never loses a purchase", () => {
  it("the return page's check credits a card payment whose webhook never arrived, once", async () => {
    await setEndpointEnabled(false);
    const sessionId = await startCheckout("pack_tapout");
    try {
      expect((await payOnHostedPage(h.fake, sessionId, "4242 4242 4242 4242")).status).toBe(200);
      await h.fake.waitForWebhooks();
      expect(await purchases(sessionId)).toHaveLength(0);
      // Two checks at once (two tabs): one credit.
      const [a, b] = await Promise.all([checkMyPayment(sessionId), checkMyPayment(sessionId, s.cookies.owner)]);
      expect(a.body).toMatchObject({ state: "credited", creditedMs: 7_200_000 });
      expect(b.body).toMatchObject({ state: "credited", creditedMs: 7_200_000 });
    } finally {
      await setEndpointEnabled(true);
    }
    // The webhook arriving late changes nothing: 120 min × 60,000 ms = 7,200,000 ms credited once (pack table).
    await h.fake.deliverEvents((await eventsOf(sessionId)).map((e) => e.id));
    expect(await purchases(sessionId)).toHaveLength(1);
  });

  it("another studio's session is not found, and a malformed id is refused naming the field", async () => {
    const other = await makeSweepStudio("Bramblecog Works", 0);
    const sessionId = await startCheckout("pack_tapout");
    const foreign = await checkMyPayment(sessionId, other.cookies.owner, other.studioId);
    expect(foreign.status).toBe(404);
    const bad = await checkMyPayment("not-a-session");
    expect(bad.status).toBe(400);
    expect(errorOf(bad.body).field).toBe("sessionId");
    const engineer = await checkMyPayment(sessionId, s.cookies.engineer);
    expect(engineer.status).toBe(403);
  });

  it("the scheduled reconcile (on the outbox) credits paid sessions the ledger lacks and queues its next run", async () => {
    await setEndpointEnabled(false);
    const missed: string[] = [];
    try {
      for (const pack of ["pack_tapout", "pack_rebound"]) {
        const id = await startCheckout(pack);
        await payOnHostedPage(h.fake, id, "5555 5555 5555 4444");
        missed.push(id);
      }
      await h.fake.waitForWebhooks();
    } finally {
      await setEndpointEnabled(true);
    }
    for (const id of missed) expect(await purchases(id)).toHaveLength(0);
    const start = new Date();
    await scheduleCheckoutReconcile(db, start);
    let now = start.getTime();
    const dispatcher = new OutboxDispatcher({ db, handlers: { [CHECKOUT_RECONCILE_KIND]: async () => void (await runScheduledCheckoutReconcile(db, h.stripe, new Date(now))) }, now: () => new Date(now) });
    // Not due before its slot.
    expect((await dispatcher.dispatchDue()).delivered).toBe(0);
    now += 15 * 60_000;
    expect((await dispatcher.dispatchDue()).delivered).toBe(1);
    for (const id of missed) expect(await purchases(id)).toHaveLength(1);
    const queued = await db.select().from(outbox).where(and(eq(outbox.kind, CHECKOUT_RECONCILE_KIND), eq(outbox.status, "pending")));
    expect(queued).toHaveLength(1);
    expect(queued[0].nextAttemptAt.getTime()).toBeGreaterThan(now);
    // A second pass over the same sessions credits nothing more.
    const again = await reconcileRecentCheckouts(db, h.stripe, { sinceUnix: Math.floor(start.getTime() / 1000) - 3600 });
    expect(again.credited).toEqual([]);
    expect(again.checked).toBeGreaterThanOrEqual(2);
  });
});

describe("invoice statuses only move forward", () => {
  it("keeps the rule: draft → open → paid | void | uncollectible; uncollectible may still be paid; paid and void are final", () => {
    expect(invoiceStatusMayMove("draft", "open")).toBe(true);
    expect(invoiceStatusMayMove("open", "paid")).toBe(true);
    expect(invoiceStatusMayMove("uncollectible", "paid")).toBe(true);
    expect(invoiceStatusMayMove("paid", "open")).toBe(false);
    expect(invoiceStatusMayMove("paid", "void")).toBe(false);
    expect(invoiceStatusMayMove("open", "draft")).toBe(false);
  });

  it("a handler that read the invoice before it was paid and commits after leaves it paid; events twice, reversed and concurrent change nothing", async () => {
    const account = await ensureOverageSubscription(db, h.stripe, s.studioId);
    // 600,000 ms of overage, so the invoice is not $0 (a zero invoice is paid at finalisation).
    await h.stripe.billing.meterEvents.create({ event_name: METER_EVENT_NAME, identifier: `lifecycle-${s.studioId}`, timestamp: h.fake.now(), payload: { [METER_CUSTOMER_KEY]: account.stripeCustomerId, [METER_VALUE_KEY]: "600000" } });
    h.fake.advanceClock(h.fake.now() + 5);
    const [draft] = h.fake.closePeriod({ customer: account.stripeCustomerId, finalize: false });
    const finalized = await h.stripe.invoices.finalizeInvoice(draft.id);
    const staleOpen = await h.stripe.invoices.retrieve(finalized.id!); // read while open
    expect(staleOpen.status).toBe("open");
    const paid = await h.stripe.invoices.pay(finalized.id!, { paid_out_of_band: true });
    expect(paid.status).toBe("paid");
    await h.fake.waitForWebhooks();
    const row = async () => (await db.select().from(invoices).where(eq(invoices.id, finalized.id!)))[0];
    expect((await row()).status).toBe("paid");
    // The slow handler commits its older read now.
    const outcome = await syncInvoice(db, h.stripe, staleOpen, null);
    expect(outcome).toMatch(/^kept invoice .* at paid/);
    expect((await row()).status).toBe("paid");
    const ids = (await eventsOf(finalized.id!)).map((e) => e.id);
    expect(ids.length).toBeGreaterThanOrEqual(3);
    await h.fake.deliverEvents([...ids].reverse());
    await h.fake.deliverConcurrently([...ids, ...ids]);
    expect((await row()).status).toBe("paid");
    expect(await (await getDb()).select().from(invoices).where(eq(invoices.id, finalized.id!))).toHaveLength(1);
  });
});
