/**
 * Issue 18: the webhook credits only what was paid. A Checkout session whose metadata names a
 * pack × quantity but whose payment is for another amount, currency or line item credits
 * nothing and leaves an audit entry for admins; signature failures answer invalid_signature
 * whichever copy of the Stripe SDK threw; an object id holding a lone surrogate answers 400.
 */
import { createRequire } from "node:module";
import { and, eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { getDb } from "@/db/client";
import { auditLog, ledgerEntries, stripeEvents } from "@/db/schema";
import { signatureHeader } from "@/lib/fakes/stripe";
import { configureBilling } from "@/lib/billing/stripe";
import { findPack } from "@/lib/billing/packs";
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
  s = await makeSweepStudio("Skerry Lamp Games", 0);
});
afterAll(async () => {
  await h.close();
  await closeTestDb();
});

const postSigned = (body: string, secret = h.fake.webhookSecret!) =>
  call(webhookPost, { method: "POST", path: "/api/v1/stripe/webhook", body, headers: { "stripe-signature": signatureHeader(body, secret, Math.floor(Date.now() / 1000)) } });

async function eventOutcome(sessionId: string): Promise<string | undefined> {
  const rows = await (await getDb()).select().from(stripeEvents);
  return rows.find((r) => r.outcome.includes(sessionId) && r.type === "checkout.session.completed")?.outcome;
}

/** A session made straight at the payment provider, as an attacker with the publishable flow could shape it. */
async function forgedSession(unitAmount: number, currency: string, metadataQuantity: number, lineQuantity: number) {
  return h.stripe.checkout.sessions.create({
    mode: "payment",
    client_reference_id: s.studioId,
    line_items: [{ price_data: { currency, unit_amount: unitAmount, product_data: { name: "Long Haul" } }, quantity: lineQuantity }],
    metadata: { studio_id: s.studioId, pack_id: "pack_longhaul", quantity: String(metadataQuantity) },
    success_url: "http://localhost:3000/ok",
    cancel_url: "http://localhost:3000/no",
  });
}

describe("a paid session that does not pay for its pack", () => {
  it.each([
    ["1 ¢ for 20 Long Haul packs", 1, "usd", 20, 1],
    ["the right unit price in another currency", 19900, "eur", 1, 1],
    ["one pack paid, twenty claimed", 19900, "usd", 20, 1],
  ])("%s credits nothing and is logged for admins", async (_label, unitAmount, currency, metadataQuantity, lineQuantity) => {
    const before = await ledgerSnapshot(s.studioId);
    const session = await forgedSession(unitAmount, currency, metadataQuantity, lineQuantity);
    expect((await payOnHostedPage(h.fake, session.id, "4242 4242 4242 4242")).status).toBe(200);
    await waitUntil(async () => (await eventOutcome(session.id)) !== undefined, "the completed event's outcome");
    expect(await eventOutcome(session.id)).toMatch(/^refused: .* does not pay for its pack/);
    const db = await getDb();
    expect(await db.select().from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, `purchase:${session.id}`))).toHaveLength(0);
    expect((await ledgerSnapshot(s.studioId)).balanceMs).toBe(before.balanceMs);
    const audits = await db.select().from(auditLog).where(and(eq(auditLog.action, "payment.mismatch"), eq(auditLog.subjectId, session.id)));
    expect(audits).toHaveLength(1);
    // Long Haul is 19,900 ¢ a pack (lib/billing/packs.ts).
    expect(audits[0].before).toMatchObject({ packId: "pack_longhaul", quantity: metadataQuantity, expectedCents: findPack("pack_longhaul")!.priceCents * metadataQuantity });
  });
});

describe("webhook error codes", () => {
  it("answers invalid_signature (not invalid_json) when the SDK that verified is another copy of the module", async () => {
    // The CommonJS build of the SDK: its error classes are not the ESM build's, as in a server bundle.
    const CjsStripe = createRequire(import.meta.url)("stripe") as new (key: string) => import("stripe").Stripe;
    configureBilling({ stripe: new CjsStripe("sk_test_cjs_copy"), webhookSecret: h.fake.webhookSecret!, mode: "fake", fakeUrl: h.fake.url });
    try {
      const body = JSON.stringify({ id: "evt_cjs_1", object: "event", type: "checkout.session.completed", data: { object: { id: "cs_test_x" } } });
      const res = await postSigned(body, "whsec_someone_else");
      expect(res.status).toBe(400);
      expect(errorOf(res.body)).toMatchObject({ code: "invalid_signature", field: "stripe-signature" });
    } finally {
      configureBilling({ stripe: h.stripe, webhookSecret: h.fake.webhookSecret!, mode: "fake", fakeUrl: h.fake.url });
    }
  });

  it("answers 400 naming data.object.id for a signed event whose object id is a lone surrogate", async () => {
    const before = await ledgerSnapshot(s.studioId);
    const body = '{"id":"evt_surrogate_1","object":"event","type":"checkout.session.completed","data":{"object":{"id":"cs_\\ud800"}}}';
    const res = await postSigned(body);
    expect(res.status).toBe(400);
    expect(errorOf(res.body).field).toBe("data.object.id");
    expect(await ledgerSnapshot(s.studioId)).toEqual(before);
  });
});
