/**
 * Three past months of the demo studio's billing, made through the local Stripe fake and the app's
 * own billing paths, so finance finds a studio that has paid for Kickdrift for a while:
 *
 *   month 1: a Rebound pack bought on the hosted payment page (credited by creditCheckout), 600
 *            minutes of usage; the overage subscription's first invoice is $0.00;
 *   month 2: 230 minutes of usage: the last 150 prepaid minutes, then 80 minutes of overage
 *            (metered through the outbox as meter events), invoiced at the month's end and paid by card;
 *   month 3: another Rebound pack, 750 minutes of usage; $0.00 overage invoice.
 *
 * The fake's clock starts at the first month (it may start in the past while it holds no customer)
 * and moves forward through the months; every ledger write carries the time it happened (`at`,
 * `debitedAt`), and the fake closes each period at its end as Stripe's test clocks do. The three
 * months net to zero minutes, so the studio's balance afterwards is its grant, as without history.
 *
 * The past months' sweeps are not kept in the demo: their debits name a batch of the month in their
 * key and memo and link to no sweep row, as the entries of a deleted sweep do.
 *
 * Demo only: it runs from the demo seed, and only against the local fake (never Stripe itself).
 */
import "server-only";
import { and, eq, inArray } from "drizzle-orm";
import type Stripe from "stripe";
import type { Db } from "@/db/client";
import { outbox, studioBilling, users } from "@/db/schema";
import { ensureOverageSubscription } from "@/lib/billing/catalog";
import { createCheckout } from "@/lib/billing/checkout";
import { deliverMeterEvent } from "@/lib/billing/meter";
import { findPack } from "@/lib/billing/packs";
import { billingConfig } from "@/lib/billing/stripe";
import { METER_EVENT_KIND, recordChunkUsage } from "@/lib/billing/usage";
import { creditCheckout, syncInvoice } from "@/lib/billing/webhook";
import { OutboxDispatcher } from "@/lib/outbox/outbox";
import { outboxHandlers } from "@/lib/outbox/process";
import { updateQuotas } from "@/lib/quotas/admin";

/** One past month of the demo's billing: a pack bought on its 2nd day (or none), then its usage. */
export interface HistoryMonth {
  packId: string | null;
  /** The month's debits in order, integer ms each (one a day from the 3rd). */
  debitsMs: readonly number[];
}

const MINUTE = 60_000;
const repeat = (n: number, ms: number) => Array.from({ length: n }, () => ms);

/**
 * Oldest first. Packs (lib/billing/packs.ts): Rebound = 750 min for 4,500 ¢. Month 2 uses the 150
 * minutes left and 80 more: 4,800,000 ms of overage at 0.00015 ¢/ms = 720 ¢ (arithmetic).
 */
export const DEMO_HISTORY: readonly HistoryMonth[] = [
  { packId: "pack_rebound", debitsMs: repeat(20, 30 * MINUTE) },
  { packId: null, debitsMs: repeat(23, 10 * MINUTE) },
  { packId: "pack_rebound", debitsMs: repeat(25, 30 * MINUTE) },
];

export interface HistorySummary {
  months: { month: string; purchasedMs: number; usedMs: number; overageMs: number }[];
}

const utc = (year: number, month: number, day: number, hour = 0, minute = 0) => new Date(Date.UTC(year, month, day, hour, minute));
const unix = (d: Date) => Math.floor(d.getTime() / 1000);

/** The first days of the three calendar months (UTC) before the month of `now`, oldest first. */
export function historyMonths(now: Date): Date[] {
  return [3, 2, 1].map((back) => utc(now.getUTCFullYear(), now.getUTCMonth() - back, 1));
}

async function control(fakeUrl: string, path: string, body: Record<string, unknown>): Promise<Record<string, unknown>> {
  const res = await fetch(`${fakeUrl}${path}`, { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });
  const answer = (await res.json()) as Record<string, unknown>;
  if (!res.ok) throw new Error(`demo history: the Stripe fake refused ${path}: ${JSON.stringify(answer)}`);
  return answer;
}

/** Waits (polling, with a deadline) until no meter event of the studio is waiting: each is at Stripe before its period closes. */
async function deliverMeterEvents(db: Db, stripe: Stripe, studioId: string): Promise<void> {
  const handlers = { ...outboxHandlers() };
  handlers[METER_EVENT_KIND] ??= (row) => deliverMeterEvent(db, stripe, row);
  const dispatcher = new OutboxDispatcher({ db, handlers });
  const deadline = Date.now() + 60_000;
  for (;;) {
    await dispatcher.dispatchDue();
    const waiting = await db
      .select({ id: outbox.id, status: outbox.status, error: outbox.lastError })
      .from(outbox)
      .where(and(eq(outbox.studioId, studioId), eq(outbox.kind, METER_EVENT_KIND), inArray(outbox.status, ["pending", "failed"])));
    const failed = waiting.find((r) => r.status === "failed");
    if (failed) throw new Error(`demo history: a meter event failed: ${failed.error}`);
    if (waiting.length === 0) return;
    if (Date.now() > deadline) throw new Error(`demo history: ${waiting.length} meter event(s) still waiting after 60 s`);
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

/** The fake's clock, unix seconds. */
async function fakeNow(fakeUrl: string): Promise<Date> {
  const health = (await (await fetch(`${fakeUrl}/_fake/health`)).json()) as { now: number };
  return new Date(health.now * 1000);
}

/** A pack bought by `buyerId` on the fake's hosted payment page, credited at the fake's time, its paid invoice mirrored. */
async function buyPack(db: Db, stripe: Stripe, fakeUrl: string, studioId: string, buyerId: string, packId: string): Promise<void> {
  const [buyer] = await db.select().from(users).where(eq(users.id, buyerId));
  const { sessionId, url } = await createCheckout(db, stripe, studioId, buyer, { packId, quantity: 1 });
  // Paid with Stripe's test card, as a browser would post the page's form.
  const paid = await fetch(url, {
    method: "POST",
    headers: { "content-type": "application/x-www-form-urlencoded", accept: "application/json" },
    body: new URLSearchParams({ card_number: "4242 4242 4242 4242", email: buyer.email }).toString(),
  });
  if (!paid.ok) throw new Error(`demo history: the payment page answered ${paid.status}`);
  const session = await stripe.checkout.sessions.retrieve(sessionId, { expand: ["line_items", "payment_intent"] });
  const outcome = await creditCheckout(db, session, null, { at: await fakeNow(fakeUrl) });
  if (!outcome.startsWith("credited")) throw new Error(`demo history: the purchase was not credited: ${outcome}`);
  if (typeof session.invoice === "string") await syncInvoice(db, stripe, await stripe.invoices.retrieve(session.invoice), null);
}

/**
 * Makes the three past months for a studio that has no Stripe customer yet; returns null (and
 * changes nothing) when it has one, or when billing is not the local fake (`reason` says why).
 */
export async function seedDemoHistory(
  db: Db,
  studioId: string,
  people: { buyerId: string; adminId: string },
  now: Date = new Date(),
): Promise<{ summary: HistorySummary | null; reason?: string }> {
  const [account] = await db.select({ id: studioBilling.studioId }).from(studioBilling).where(eq(studioBilling.studioId, studioId));
  if (account) return { summary: null, reason: "the studio already has billing" };
  let config;
  try {
    config = billingConfig();
  } catch (error) {
    return { summary: null, reason: (error as Error).message };
  }
  if (config.mode !== "fake" || !config.fakeUrl) return { summary: null, reason: "billing is not the local Stripe fake" };
  const { stripe, fakeUrl } = config;
  const [admin] = await db.select({ id: users.id, email: users.email }).from(users).where(eq(users.id, people.adminId));
  const months = historyMonths(now);
  const first = months[0];
  await control(fakeUrl, "/_fake/start_clock", { to: unix(utc(first.getUTCFullYear(), first.getUTCMonth(), 2, 9)) });

  // The app receives none of these months' events: the seed does what their handlers would, dated.
  const endpoints = (await stripe.webhookEndpoints.list({ limit: 100 })).data.filter((e) => e.status === "enabled");
  for (const e of endpoints) await stripe.webhookEndpoints.update(e.id, { disabled: true });
  const summary: HistorySummary = { months: [] };
  try {
    // An admin allowed overage for the studio (Admin → Quotas); its subscription starts now on the fake's clock.
    await updateQuotas(db, admin, studioId, { overageAllowed: true, reason: "Demo history: overage allowed while the studio's usage grew" });
    const billing = await ensureOverageSubscription(db, stripe, studioId);
    let unpaidInvoice: string | null = null;
    for (let m = 0; m < months.length; m++) {
      const start = months[m];
      const [year, month] = [start.getUTCFullYear(), start.getUTCMonth()];
      const day = (d: number, hour = 9, minute = 0) => utc(year, month, d, hour, minute);
      if (m > 0) {
        const closed = (await control(fakeUrl, "/_fake/advance_clock", { to: unix(day(2)) })).invoices as Stripe.Invoice[];
        for (const invoice of closed) {
          const synced = await stripe.invoices.retrieve(invoice.id!);
          await syncInvoice(db, stripe, synced, null);
          if (synced.status === "open") unpaidInvoice = synced.id!;
        }
      }
      const plan = DEMO_HISTORY[m];
      let purchasedMs = 0;
      if (plan.packId) {
        await buyPack(db, stripe, fakeUrl, studioId, people.buyerId, plan.packId);
        purchasedMs = findPack(plan.packId)!.minutes * MINUTE;
      }
      if (unpaidInvoice) {
        // Last month's overage invoice, paid by card on the 6th (before it falls due).
        await control(fakeUrl, "/_fake/advance_clock", { to: unix(day(6)) });
        await control(fakeUrl, `/_fake/customers/${billing.stripeCustomerId}/default_card`, { number: "4242424242424242" });
        await syncInvoice(db, stripe, await stripe.invoices.pay(unpaidInvoice), null);
        unpaidInvoice = null;
      }
      // The clock goes to the month's 28th first, so every debit's meter event is in the fake's past.
      await control(fakeUrl, "/_fake/advance_clock", { to: unix(day(28, 12)) });
      let usedMs = 0;
      let overageMs = 0;
      const label = `demo-history-${start.toISOString().slice(0, 7)}`;
      for (let i = 0; i < plan.debitsMs.length; i++) {
        const debitedAt = day(Math.min(3 + i, 27), 10, i);
        const result = await db.transaction((tx) =>
          recordChunkUsage(tx, {
            studioId,
            sweepId: label,
            chunkIndex: i,
            computeMs: plan.debitsMs[i],
            memo: `Nightly regression sweeps of ${start.toLocaleString("en-GB", { month: "long", year: "numeric", timeZone: "UTC" })}, batch ${i + 1} (demo history; those sweeps are not kept)`,
            debitedAt,
            sweepKept: false,
          }),
        );
        usedMs += result.prepaidMs + result.overageMs;
        overageMs += result.overageMs;
      }
      await deliverMeterEvents(db, stripe, studioId);
      summary.months.push({ month: start.toISOString().slice(0, 7), purchasedMs, usedMs, overageMs });
    }
    // Back to the present: the third month's period closes at the 1st of this month.
    const closed = (await control(fakeUrl, "/_fake/advance_clock", { to: Math.max(unix(now), unix(new Date())) })).invoices as Stripe.Invoice[];
    for (const invoice of closed) await syncInvoice(db, stripe, await stripe.invoices.retrieve(invoice.id!), null);
    // Overage back to the plan's default, as before the history.
    await updateQuotas(db, admin, studioId, { overageAllowed: null, reason: "Demo history: overage back to the plan default" });
  } finally {
    for (const e of endpoints) await stripe.webhookEndpoints.update(e.id, { disabled: false });
  }
  return { summary };
}
