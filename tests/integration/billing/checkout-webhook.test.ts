/**
 * Buying a pack: Checkout through the API, payment on the fake's hosted page, the signed webhook
 * crediting the ledger once — however often and in whatever order it arrives — and bad input refused
 * with nothing written.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { getDb } from "@/db/client";
import { invoices, ledgerEntries, outbox, stripeEvents } from "@/db/schema";
import { signatureHeader } from "@/lib/fakes/stripe";
import { findPack } from "@/lib/billing/packs";
import { POST as checkoutPost } from "@/app/api/v1/studios/[studioId]/billing/checkout/route";
import { POST as webhookPost } from "@/app/api/v1/stripe/webhook/route";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { call, errorOf } from "../../helpers/http";
import { makeSweepStudio, type TestStudio } from "../sweeps/support";
import { ledgerSnapshot, payOnHostedPage, startBillingHarness, waitUntil, type BillingHarness } from "./support";

let h: BillingHarness;
let s: TestStudio;

beforeAll(async () => {
  await useFreshDb();
  h = await startBillingHarness();
  s = await makeSweepStudio("Gannet Yard Games", 0);
});
afterAll(async () => {
  await h.close();
  await closeTestDb();
});

async function startCheckout(cookie: string, body: unknown) {
  return call(checkoutPost, { method: "POST", path: `/api/v1/studios/${s.studioId}/billing/checkout`, params: { studioId: s.studioId }, body, cookie });
}

async function purchases(sessionId: string) {
  return (await getDb()).select().from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, `purchase:${sessionId}`));
}

/** Posts a body to the webhook route signed with the endpoint's secret (or another). */
async function postSigned(body: string, secret = h.fake.webhookSecret!) {
  return call(webhookPost, { method: "POST", path: "/api/v1/stripe/webhook", body, headers: { "stripe-signature": signatureHeader(body, secret, Math.floor(Date.now() / 1000)) } });
}

describe("buying a pack", () => {
  it("credits the pack's minutes once the hosted payment succeeds, with the price in cents and a receipt", async () => {
    const before = await ledgerSnapshot(s.studioId);
    const started = await startCheckout(s.cookies.owner, { packId: "pack_rebound" });
    expect(started.status, JSON.stringify(started.body)).toBe(201);
    const { sessionId, url } = started.body as { sessionId: string; url: string };
    expect(url).toContain(`/c/pay/${sessionId}`);
    const paid = await payOnHostedPage(h.fake, sessionId, "4242 4242 4242 4242");
    expect(paid.status).toBe(200);
    // The hosted page sends the browser back to the app's billing page with the session id filled in.
    expect(paid.body.redirect).toBe(`http://localhost:3000/studios/${s.studioId}/billing?checkout=success&session_id=${sessionId}`);
    await waitUntil(async () => (await purchases(sessionId)).length === 1, "the purchase credit");
    const [entry] = await purchases(sessionId);
    const pack = findPack("pack_rebound")!;
    // 750 minutes × 60,000 ms = 45,000,000 ms for 4,500 ¢ (the pack table in lib/billing/packs.ts).
    expect(entry).toMatchObject({ kind: "purchase", computeMs: pack.minutes * 60_000, amountCents: 4500 });
    const after = await ledgerSnapshot(s.studioId);
    expect(after.balanceMs - before.balanceMs).toBe(45_000_000);
    const receipts = await (await getDb()).select().from(outbox).where(eq(outbox.idempotencyKey, `mail:receipt:${sessionId}`));
    expect(receipts).toHaveLength(1);
    expect((receipts[0].payload as { to: string; subject: string }).to).toBe(s.owner.email);
  });

  it("two packs in one checkout credit twice the minutes for twice the price", async () => {
    const { sessionId } = (await startCheckout(s.cookies.finance, { packId: "pack_tapout", quantity: 2 })).body as { sessionId: string };
    await payOnHostedPage(h.fake, sessionId, "5555 5555 5555 4444");
    await waitUntil(async () => (await purchases(sessionId)).length === 1, "the purchase credit");
    // 2 × 120 minutes × 60,000 ms = 14,400,000 ms for 2 × 900 ¢ (the pack table).
    expect((await purchases(sessionId))[0]).toMatchObject({ computeMs: 14_400_000, amountCents: 1800 });
  });

  it("a declined card shows the decline and credits nothing", async () => {
    const before = await ledgerSnapshot(s.studioId);
    const { sessionId } = (await startCheckout(s.cookies.finance, { packId: "pack_tapout" })).body as { sessionId: string };
    const declined = await payOnHostedPage(h.fake, sessionId, "4000 0000 0000 0002");
    expect(declined.status).toBe(402);
    expect((declined.body.error as { code: string }).code).toBe("card_declined");
    // Give any (wrong) delivery time to land before checking nothing changed.
    await h.fake.waitForWebhooks();
    expect(await purchases(sessionId)).toHaveLength(0);
    expect((await ledgerSnapshot(s.studioId)).balanceMs).toBe(before.balanceMs);
  });

  it("the same completed event delivered five more times, and out of order with other events, credits once", async () => {
    const { sessionId } = (await startCheckout(s.cookies.owner, { packId: "pack_tapout" })).body as { sessionId: string };
    await payOnHostedPage(h.fake, sessionId, "4242 4242 4242 4242");
    await waitUntil(async () => (await purchases(sessionId)).length === 1, "the purchase credit");
    const before = await ledgerSnapshot(s.studioId);
    const events = await h.stripe.events.list({ type: "checkout.session.completed", limit: 100 });
    const completed = events.data.find((e) => (e.data.object as { id: string }).id === sessionId)!;
    for (let i = 0; i < 5; i++) await h.fake.resendEvent(completed.id);
    // Older events after the newer one, the completed one again in the middle.
    const earlier = events.data.filter((e) => e.id !== completed.id).map((e) => e.id);
    await h.fake.deliverEvents([completed.id, ...earlier.reverse(), completed.id]);
    await h.fake.waitForWebhooks();
    expect(await purchases(sessionId)).toHaveLength(1);
    const after = await ledgerSnapshot(s.studioId);
    expect(after.balanceMs).toBe(before.balanceMs);
    expect(after.entries).toBe(before.entries);
    const recorded = await (await getDb()).select().from(stripeEvents).where(eq(stripeEvents.id, completed.id));
    expect(recorded).toHaveLength(1);
  });

  it("an invoice's events out of order leave the invoice as Stripe holds it now", async () => {
    const [account] = await h.stripe.customers.search({ query: `metadata['studio_id']:'${s.studioId}'` }).then((r) => r.data);
    // The pack purchases above each made a paid invoice (Checkout invoice_creation); no overage subscription exists.
    expect(await h.stripe.subscriptions.list({ customer: account.id }).then((r) => r.data)).toHaveLength(0);
    const [closed] = (await h.stripe.invoices.list({ customer: account.id, limit: 1 })).data;
    expect(closed.status).toBe("paid");
    await h.fake.waitForWebhooks();
    const list = await h.stripe.events.list({ type: "invoice.*", limit: 100 });
    const ids = list.data.filter((e) => (e.data.object as { id: string }).id === closed.id).map((e) => e.id); // newest first
    expect(ids.length).toBeGreaterThanOrEqual(3);
    await h.fake.deliverEvents(ids); // paid before finalized before created
    const [row] = await (await getDb()).select().from(invoices).where(eq(invoices.id, closed.id));
    expect(row.status).toBe((await h.stripe.invoices.retrieve(closed.id!)).status);
    expect(row.status).toBe("paid");
    expect(row.kind).toBe("pack");
  });
});

describe("the webhook refuses what Stripe did not send", () => {
  it("rejects a bad signature with 400 and changes nothing", async () => {
    const before = await ledgerSnapshot(s.studioId);
    const body = JSON.stringify({ id: "evt_forged_1", object: "event", type: "checkout.session.completed", data: { object: { id: "cs_test_forged" } } });
    const forged = await postSigned(body, "whsec_not_the_endpoint_secret");
    // The same body signed by the endpoint's secret but five minutes and more ago is refused too (replay window).
    const stale = await call(webhookPost, { method: "POST", path: "/api/v1/stripe/webhook", body, headers: { "stripe-signature": signatureHeader(body, h.fake.webhookSecret!, Math.floor(Date.now() / 1000) - 3600) } });
    expect(stale.status).toBe(400);
    expect(forged.status).toBe(400);
    expect(errorOf(forged.body)).toMatchObject({ code: "invalid_signature", field: "stripe-signature" });
    const unsigned = await call(webhookPost, { method: "POST", path: "/api/v1/stripe/webhook", body });
    expect(unsigned.status).toBe(400);
    // A genuine signature over another body does not cover this one.
    const header = signatureHeader("{}", h.fake.webhookSecret!, Math.floor(Date.now() / 1000));
    const swapped = await call(webhookPost, { method: "POST", path: "/api/v1/stripe/webhook", body, headers: { "stripe-signature": header } });
    expect(swapped.status).toBe(400);
    expect(await ledgerSnapshot(s.studioId)).toEqual(before);
  });

  it("answers malformed bodies with a clear 400 and writes nothing; unknown types and vanished objects are acknowledged", async () => {
    const before = await ledgerSnapshot(s.studioId);
    const notJson = await postSigned("{ this is not json");
    expect(notJson.status).toBe(400);
    expect(errorOf(notJson.body).code).toBe("invalid_json");
    const noId = await postSigned(JSON.stringify({ type: "checkout.session.completed", data: { object: { id: "cs_test_x" } } }));
    expect(noId.status).toBe(400);
    expect(errorOf(noId.body).field).toBe("id");
    const noObject = await postSigned(JSON.stringify({ id: "evt_shape_2", type: "invoice.paid", data: {} }));
    expect(noObject.status).toBe(400);
    expect(errorOf(noObject.body).field).toBe("data.object");
    // A signed event of a type Kickdrift does not act on is acknowledged (2xx), not refused: Stripe disables endpoints that keep failing.
    const unknownType = await postSigned(JSON.stringify({ id: "evt_unknown_3", type: "crate.launched", data: { object: { id: "crt_1" } } }));
    expect(unknownType.status).toBe(200);
    expect((unknownType.body as { outcome: string }).outcome).toMatch(/^acknowledged/);
    const noSuchSession = await postSigned(JSON.stringify({ id: "evt_missing_4", type: "checkout.session.completed", data: { object: { id: "cs_test_nowhere" } } }));
    expect(noSuchSession.status).toBe(200);
    expect((noSuchSession.body as { outcome: string }).outcome).toMatch(/^ignored/);
    // A forged amount in the body is never trusted: the session is re-read from Stripe.
    const array = await postSigned("[1,2,3]");
    expect(array.status).toBe(400);
    // Only the two acknowledged events are recorded; the ledger and outbox are unchanged.
    expect(await ledgerSnapshot(s.studioId)).toEqual({ ...before, events: before.events + 2 });
  });
});

describe("checkout input and roles", () => {
  it("refuses an unknown pack, non-integer or out-of-range quantities and unknown fields, naming the field; no session is made", async () => {
    const sessionsBefore = (await h.stripe.checkout.sessions.list({ limit: 100 })).data.length;
    const cases: [unknown, string][] = [
      [{ packId: "pack_moonshot" }, "packId"],
      [{ packId: "pack_tapout", quantity: 1.5 }, "quantity"],
      [{ packId: "pack_tapout", quantity: "2" }, "quantity"],
      [{ packId: "pack_tapout", quantity: 0 }, "quantity"],
      [{ packId: "pack_tapout", quantity: 21 }, "quantity"],
      [{ packId: "pack_tapout", amountCents: 1 }, "amountCents"],
      [{}, "packId"],
    ];
    for (const [body, field] of cases) {
      const res = await startCheckout(s.cookies.owner, body);
      expect(res.status, JSON.stringify(body)).toBe(400);
      expect(errorOf(res.body).field, JSON.stringify(body)).toBe(field);
      expect(errorOf(res.body).message.length).toBeGreaterThan(10);
    }
    expect((await h.stripe.checkout.sessions.list({ limit: 100 })).data.length).toBe(sessionsBefore);
  });

  it("an engineer cannot buy packs (403); finance can", async () => {
    const engineer = await startCheckout(s.cookies.engineer, { packId: "pack_tapout" });
    expect(engineer.status).toBe(403);
    expect(errorOf(engineer.body).code).toBe("forbidden");
    expect((await startCheckout(s.cookies.finance, { packId: "pack_tapout" })).status).toBe(201);
  });
});
