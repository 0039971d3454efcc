/**
 * Billing tests: the local Stripe fake on a free port, the app's billing configured against it, and
 * the app's webhook route served over HTTP so the fake's signed deliveries reach the real handler.
 */
import { randomUUID } from "node:crypto";
import { createServer, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import { count, eq } from "drizzle-orm";
import type Stripe from "stripe";
import { getDb, type Db } from "@/db/client";
import { ledgerEntries, outbox, stripeEvents, studioQuotas } from "@/db/schema";
import { startStripeFake, type StripeFake } from "@/lib/fakes/stripe";
import { configureBilling, fakeStripeClient } from "@/lib/billing/stripe";
import { HANDLED_EVENT_TYPES } from "@/lib/billing/webhook";
import { OVERDUE_GRACE_DAYS } from "@/lib/billing/packs";
import { appendLedgerEntry } from "@/lib/ledger/ledger";
import { balanceMs } from "@/lib/quotas/standing";
import { submitSweep } from "@/lib/queue/submit";
import { OutboxDispatcher } from "@/lib/outbox/outbox";
import { deliverMeterEvent } from "@/lib/billing/meter";
import { METER_EVENT_KIND } from "@/lib/billing/usage";
import { POST as webhookPost } from "@/app/api/v1/stripe/webhook/route";
import { afterAll, beforeAll } from "vitest";
import { closeTestDb, TEST_BASE_URL, useFreshDb } from "../../helpers/db";
import { grant, puckSpec } from "../sweeps/support";

export interface BillingHarness {
  fake: StripeFake;
  stripe: Stripe;
  receiver: Server;
  close(): Promise<void>;
}

/** Serves the webhook route on a loopback port and starts the fake delivering to it. */
export async function startBillingHarness(): Promise<BillingHarness> {
  const receiver = createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on("data", (c: Buffer) => chunks.push(c));
    req.on("end", async () => {
      const request = new Request(new URL(req.url ?? "/", TEST_BASE_URL), {
        method: req.method,
        headers: Object.entries(req.headers).flatMap(([k, v]) => (typeof v === "string" ? [[k, v] as [string, string]] : [])),
        body: Buffer.concat(chunks),
      });
      const answer = await webhookPost(request, { params: Promise.resolve({}) });
      res.writeHead(answer.status, { "content-type": "application/json" });
      res.end(await answer.text());
    });
  });
  await new Promise<void>((resolve) => receiver.listen(0, "127.0.0.1", resolve));
  const port = (receiver.address() as AddressInfo).port;
  const fake = await startStripeFake({
    port: 0,
    webhookUrl: `http://127.0.0.1:${port}/api/v1/stripe/webhook`,
    webhookEvents: [...HANDLED_EVENT_TYPES],
    webhookRetryDelaysMs: [50, 100],
    // As the app's own fake (stripeFakeOptions) and the live account: invoice.overdue after the grace period.
    overdueNoticeDays: OVERDUE_GRACE_DAYS,
    // Stripe's hour between a renewal invoice's draft and its finalisation, compressed like the retry schedule.
    draftWindowSeconds: 1,
  });
  const stripe = fakeStripeClient(fake.port);
  configureBilling({ stripe, webhookSecret: fake.webhookSecret!, mode: "fake", fakeUrl: fake.url });
  return {
    fake,
    stripe,
    receiver,
    async close() {
      configureBilling(undefined);
      await fake.close();
      receiver.closeAllConnections();
      await new Promise<void>((resolve) => receiver.close(() => resolve()));
    },
  };
}

/** Pays a Checkout session on the fake's hosted page as a browser would (form post), answering JSON. */
export async function payOnHostedPage(fake: StripeFake, sessionId: string, card: string): Promise<{ status: number; body: Record<string, unknown> }> {
  const res = await fetch(`${fake.url}/c/pay/${sessionId}`, {
    method: "POST",
    headers: { "content-type": "application/x-www-form-urlencoded", accept: "application/json" },
    body: new URLSearchParams({ card_number: card, email: "buyer@gannetyard.test" }).toString(),
  });
  return { status: res.status, body: (await res.json()) as Record<string, unknown> };
}

/** A dispatcher with only the meter-event handler and a clock the test moves (to make retries due). */
export function meterDispatcher(db: Db, stripe: Stripe): { dispatcher: OutboxDispatcher; advance(ms: number): void } {
  let now = Date.now();
  const dispatcher = new OutboxDispatcher({ db, handlers: { [METER_EVENT_KIND]: (row) => deliverMeterEvent(db, stripe, row) }, now: () => new Date(now) });
  return { dispatcher, advance: (ms) => (now += ms) };
}

export async function ledgerSnapshot(studioId: string) {
  const db = await getDb();
  const [entries] = await db.select({ n: count() }).from(ledgerEntries).where(eq(ledgerEntries.studioId, studioId));
  const [events] = await db.select({ n: count() }).from(stripeEvents);
  const [queued] = await db.select({ n: count() }).from(outbox);
  return { entries: Number(entries.n), events: Number(events.n), outbox: Number(queued.n), balanceMs: await balanceMs(db, studioId) };
}

export async function waitUntil(predicate: () => Promise<boolean>, what: string, timeoutMs = 15_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!(await predicate())) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 25));
  }
}

/**
 * The set-up of a billing test file: a fresh database and the harness for the whole file, closed
 * after it. `ready` receives both once they are up (before the file's tests run).
 */
export function billingTestFile(ready: (file: { db: Db; h: BillingHarness }) => void): void {
  let h: BillingHarness | undefined;
  beforeAll(async () => {
    const db = await useFreshDb();
    h = await startBillingHarness();
    ready({ db, h });
  });
  afterAll(async () => {
    await h?.close();
    await closeTestDb();
  });
}

/** Overage permitted for the studio, as a platform admin's quota edit leaves it (the owner's switch left on). */
export async function allowOverage(db: Db, studioId: string): Promise<void> {
  await db.insert(studioQuotas).values({ studioId, overageAllowed: true }).onConflictDoUpdate({ target: studioQuotas.studioId, set: { overageAllowed: true } });
}

/** A sweep row to hang usage entries on (queued, never run here), with the studio's balance back where it was. */
export async function usageSweep(db: Db, studioId: string): Promise<string> {
  const key = randomUUID();
  await grant(studioId, 60 * 60_000, `sweep-grant:${studioId}:${key}`);
  const sweep = await submitSweep(db, studioId, { spec: puckSpec() });
  await appendLedgerEntry(db, { studioId, kind: "adjustment", computeMs: -(60 * 60_000), idempotencyKey: `sweep-grant-back:${sweep.id}`, memo: "test: grant taken back" });
  return sweep.id;
}
