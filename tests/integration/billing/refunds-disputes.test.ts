/**
 * Refunds and lost disputes take back a pack's minutes in proportion to the cents returned, and the
 * cents, once per refund or dispute however their events arrive (twice, out of order, concurrently);
 * the balance may go below zero and sweeps then pause with the reason; owners and finance are told.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq, like, sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { ledgerEntries, outbox, type User } from "@/db/schema";
import { takeBackMs } from "@/lib/billing/refunds";
import { balanceMs } from "@/lib/quotas/standing";
import { runLimitReason, RUN_LIMIT_REASONS, studioStanding } from "@/lib/quotas/enforce";
import { POST as checkoutPost } from "@/app/api/v1/studios/[studioId]/billing/checkout/route";
import { POST as refundPost } from "@/app/api/v1/admin/studios/[studioId]/refunds/route";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { makeUser } from "../../helpers/factories";
import { call, errorOf, sessionCookie } from "../../helpers/http";
import { makeSweepStudio, type TestStudio } from "../sweeps/support";
import { payOnHostedPage, startBillingHarness, waitUntil, type BillingHarness } from "./support";

let db: Db;
let h: BillingHarness;
let admin: User;
let adminCookie: string;

beforeAll(async () => {
  db = await useFreshDb();
  h = await startBillingHarness();
  admin = await makeUser({ name: "operator", isAdmin: true });
  adminCookie = await sessionCookie(admin);
});
afterAll(async () => {
  await h.close();
  await closeTestDb();
});

async function buy(s: TestStudio, packId: string, card = "4242 4242 4242 4242"): Promise<string> {
  const res = await call(checkoutPost, { method: "POST", path: `/api/v1/studios/${s.studioId}/billing/checkout`, params: { studioId: s.studioId }, body: { packId }, cookie: s.cookies.owner });
  const { sessionId } = res.body as { sessionId: string };
  expect((await payOnHostedPage(h.fake, sessionId, card)).status).toBe(200);
  await waitUntil(async () => (await db.select().from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, `purchase:${sessionId}`))).length === 1, "the purchase credit");
  return sessionId;
}

const refund = (studioId: string, body: unknown, cookie = adminCookie) => call(refundPost, { method: "POST", path: `/api/v1/admin/studios/${studioId}/refunds`, params: { studioId }, body, cookie });

const takeBacks = (studioId: string) => db.select().from(ledgerEntries).where(sql`${ledgerEntries.studioId} = ${studioId} and ${ledgerEntries.kind} = 'refund'`).orderBy(ledgerEntries.id);

async function chargeOf(sessionId: string) {
  const session = await h.stripe.checkout.sessions.retrieve(sessionId);
  const intent = await h.stripe.paymentIntents.retrieve(session.payment_intent as string);
  return intent.latest_charge as string;
}

async function eventIds(objectId: string, types: string[]) {
  const ids: string[] = [];
  for await (const e of h.stripe.events.list({ limit: 100 })) if (types.includes(e.type) && (e.data.object as { id: string }).id === objectId) ids.push(e.id);
  return ids.reverse();
}

describe("minutes taken back in proportion", () => {
  it("parts of a fully returned purchase add up to exactly its minutes, whatever the rounding", () => {
    // Long Haul: 4,000 min = 240,000,000 ms for 19,900 ¢, 12,060.3… ms a cent (pack table; arithmetic).
    const longHaul = { computeMs: 240_000_000, amountCents: 19_900 };
    const parts = takeBackMs(longHaul, [{ cents: 1 }, { cents: 1 }, { cents: 19_898 }]);
    // round(12,060.30) = 12,060; round(24,120.60) − 12,060 = 12,061; the rest (arithmetic).
    expect(parts).toEqual([12_060, 12_061, 240_000_000 - 24_121]);
    expect(parts.reduce((a, b) => a + b, 0)).toBe(240_000_000);
    expect(takeBackMs(longHaul, [{ cents: 19_900 }])).toEqual([240_000_000]);
  });
});

describe("refunds", () => {
  it("an admin's partial refund through Stripe takes back its share once; the rest refunded in Stripe's dashboard takes back the remainder", async () => {
    const s = await makeSweepStudio("Mossgate Foundry", 0);
    const sessionId = await buy(s, "pack_rebound");
    expect(await balanceMs(db, s.studioId)).toBe(45_000_000);
    const first = await refund(s.studioId, { sessionId, amountCents: 1_500, reason: "Studio bought the wrong pack" });
    expect(first.status, JSON.stringify(first.body)).toBe(201);
    // Rebound: 750 min = 45,000,000 ms for 4,500 ¢ → 1,500 ¢ take back 15,000,000 ms (pack table; arithmetic).
    expect((await takeBacks(s.studioId)).map((e) => [e.computeMs, e.amountCents])).toEqual([[-15_000_000, -1_500]]);
    const charge = await chargeOf(sessionId);
    await h.fake.waitForWebhooks();
    // The remaining 3,000 ¢ refunded outside Kickdrift (Stripe's dashboard); events twice, reversed and at once.
    await h.stripe.refunds.create({ charge });
    await h.fake.waitForWebhooks();
    const ids = await eventIds(charge, ["charge.refunded"]);
    expect(ids).toHaveLength(2);
    await h.fake.deliverEvents([...ids].reverse());
    await h.fake.deliverConcurrently([...ids, ...ids, ...ids]);
    const entries = await takeBacks(s.studioId);
    expect(entries.map((e) => [e.computeMs, e.amountCents])).toEqual([
      [-15_000_000, -1_500],
      [-30_000_000, -3_000],
    ]);
    expect(await balanceMs(db, s.studioId)).toBe(0);
    const mails = await db.select().from(outbox).where(like(outbox.idempotencyKey, "mail:refund:%"));
    const mine = mails.filter((m) => m.studioId === s.studioId).map((m) => (m.payload as { to: string }).to).sort();
    expect(mine).toEqual([s.finance.email, s.finance.email, s.owner.email, s.owner.email].sort());
    // Nothing left: a further refund is refused with the reason, and more than was paid names the field.
    const none = await refund(s.studioId, { sessionId, reason: "again" });
    expect(none.status).toBe(409);
  });

  it("refuses an amount above what is left, naming the field; an unknown purchase is 404; a reason is required", async () => {
    const s = await makeSweepStudio("Quillrock Games", 0);
    const sessionId = await buy(s, "pack_tapout");
    const tooMuch = await refund(s.studioId, { sessionId, amountCents: 901, reason: "too much" });
    expect(tooMuch.status).toBe(400);
    expect(errorOf(tooMuch.body).field).toBe("amountCents");
    const noReason = await refund(s.studioId, { sessionId });
    expect(noReason.status).toBe(400);
    expect(errorOf(noReason.body).field).toBe("reason");
    const unknown = await refund(s.studioId, { sessionId: "cs_test_nothing_here", reason: "no such" });
    expect(unknown.status).toBe(404);
    expect(await takeBacks(s.studioId)).toHaveLength(0);
  });
});

describe("disputes", () => {
  it("a dispute tells owners and finance; lost, it takes back the minutes once (events reversed, twice, concurrent); the balance goes below zero and sweeps pause with the reason", async () => {
    const s = await makeSweepStudio("Cinderpatch Studio", 0);
    // Stripe's test card 4000 0000 0000 0259: the charge succeeds, then is disputed as fraudulent.
    const sessionId = await buy(s, "pack_tapout", "4000 0000 0000 0259");
    await h.fake.waitForWebhooks();
    const charge = await chargeOf(sessionId);
    const [dispute] = (await h.stripe.disputes.list({ charge })).data;
    expect(dispute.status).toBe("needs_response");
    await waitUntil(async () => (await db.select().from(outbox).where(like(outbox.idempotencyKey, `mail:dispute-opened:${dispute.id}:%`))).length === 2, "the dispute e-mails");
    expect(await takeBacks(s.studioId)).toHaveLength(0);
    // Some of the minutes are used before the dispute is decided.
    await db.insert(ledgerEntries).values({ studioId: s.studioId, kind: "usage", computeMs: -1_200_000, idempotencyKey: `usage:dispute-test:${s.studioId}`, memo: "test usage" });
    h.fake.closeDispute(dispute.id, "lost");
    await h.fake.waitForWebhooks();
    const ids = await eventIds(dispute.id, ["charge.dispute.created", "charge.dispute.closed"]);
    await h.fake.deliverEvents([...ids].reverse());
    await h.fake.deliverConcurrently([...ids, ...ids]);
    const entries = await takeBacks(s.studioId);
    // Tap-out: 120 min = 7,200,000 ms for 900 ¢, all taken back (pack table).
    expect(entries.map((e) => [e.computeMs, e.amountCents, e.idempotencyKey])).toEqual([[-7_200_000, -900, `dispute:${dispute.id}`]]);
    // 7,200,000 − 1,200,000 − 7,200,000 = −1,200,000 ms (arithmetic).
    expect(await balanceMs(db, s.studioId)).toBe(-1_200_000);
    expect(runLimitReason(await studioStanding(db, s.studioId))).toBe(RUN_LIMIT_REASONS.negativeBalance);
    const lostMails = await db.select().from(outbox).where(like(outbox.idempotencyKey, `mail:dispute:${dispute.id}:%`));
    expect(lostMails.map((m) => (m.payload as { to: string }).to).sort()).toEqual([s.owner.email, s.finance.email].sort());
  });
});
