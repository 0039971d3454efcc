/**
 * Delivers queued overage to Stripe (outbox kind "stripe.meter_event"): as a meter event when its
 * time falls in the subscription's current period; when that period was already invoiced (the
 * event comes late: a retry backlog, an outage), as an invoice item on the subscription's next
 * invoice — a line of its own naming the period the usage belongs to — because Stripe would count a
 * meter event for a closed period on no invoice at all.
 */
import "server-only";
import { eq, sql } from "drizzle-orm";
import Stripe from "stripe";
import type { Db } from "@/db/client";
import { outbox, type OutboxRow } from "@/db/schema";
import { PermanentDeliveryError } from "@/lib/outbox/outbox";
import { registerOutboxHandler } from "@/lib/outbox/process";
import { ensureOverageSubscription, METER_CUSTOMER_KEY, METER_EVENT_NAME, METER_VALUE_KEY } from "./catalog";
import { OVERAGE_UNIT_AMOUNT_DECIMAL } from "./packs";
import { billingConfig } from "./stripe";
import { LATE_USAGE_METADATA_KEY, METER_EVENT_KIND, OVERAGE_SUBSCRIPTION_KIND, type MeterEventPayload } from "./usage";

/** The meter-event time: the chunk's time, or the start of the studio's overage subscription if later. */
export function meterTimestamp(payload: MeterEventPayload, subscriptionStartedAt: Date | null): number {
  const start = subscriptionStartedAt ? Math.floor(subscriptionStartedAt.getTime() / 1000) : 0;
  return Math.max(payload.timestamp, start);
}

const day = (unix: number) => new Date(unix * 1000).toISOString().slice(0, 10);

/** The invoiced period [start, end) of the subscription that contains `at`, from its invoices' usage lines. */
async function invoicedPeriodOf(stripe: Stripe, subscriptionId: string, at: number): Promise<{ start: number; end: number } | null> {
  for await (const invoice of stripe.invoices.list({ subscription: subscriptionId, limit: 100 })) {
    for (const line of invoice.lines?.data ?? []) {
      if (line.metadata?.[LATE_USAGE_METADATA_KEY]) continue;
      if (line.period.start <= at && at < line.period.end) return { start: line.period.start, end: line.period.end };
    }
  }
  return null;
}

async function markRow(db: Db, rowId: number, fields: Record<string, unknown>): Promise<void> {
  await db.update(outbox).set({ payload: sql`${outbox.payload} || ${JSON.stringify(fields)}::jsonb` }).where(eq(outbox.id, rowId));
}

/**
 * Bills a late chunk as its own invoice item, once. An earlier attempt may have reached Stripe as a
 * meter event while the period was still open (its answer lost): a probe under its own idempotency
 * key then meets the identifier Stripe already holds, and the usage was counted on that period's
 * invoice. The row notes a late probe before it is sent, so a probe of our own is not mistaken for
 * that. The outbox row records where the usage went (reconciliation reads it).
 */
async function billLate(db: Db, stripe: Stripe, row: OutboxRow, payload: MeterEventPayload, customer: string, subscriptionId: string, at: number, currentStart: number): Promise<void> {
  for await (const item of stripe.invoiceItems.list({ customer, limit: 100 })) {
    if (item.metadata?.[LATE_USAGE_METADATA_KEY] === payload.identifier) return markRow(db, row.id, { lateInvoiceItem: item.id });
  }
  const probedBefore = (row.payload as { lateProbe?: boolean }).lateProbe === true;
  if (!probedBefore) await markRow(db, row.id, { lateProbe: true });
  try {
    await stripe.billing.meterEvents.create(
      { event_name: METER_EVENT_NAME, identifier: (payload as { meterIdentifier?: string }).meterIdentifier ?? payload.identifier, timestamp: at, payload: { [METER_CUSTOMER_KEY]: customer, [METER_VALUE_KEY]: String(payload.valueMs) } },
      { idempotencyKey: `kd-meter-late-${(payload as { meterIdentifier?: string }).meterIdentifier ?? payload.identifier}` },
    );
  } catch (error) {
    const invalid = error instanceof Stripe.errors.StripeInvalidRequestError;
    const exists = invalid && error.code === "resource_already_exists" && error.param === "identifier";
    // Older than Stripe's meter window (35 days): nothing can hold it, so no earlier attempt counted it either.
    if (!exists && !(invalid && error.param === "timestamp")) throw error;
    // Held already and not by a probe of ours: an earlier attempt landed in time and its period's invoice counted it.
    if (exists && !probedBefore) return markRow(db, row.id, { countedInPeriod: true });
  }
  const period = (await invoicedPeriodOf(stripe, subscriptionId, at)) ?? { start: at, end: currentStart };
  const item = await stripe.invoiceItems.create(
    {
      customer,
      subscription: subscriptionId,
      currency: "usd",
      quantity: payload.valueMs,
      unit_amount_decimal: Stripe.Decimal.from(OVERAGE_UNIT_AMOUNT_DECIMAL),
      period: { start: period.start, end: period.end },
      description: `Late overage of ${day(period.start)} – ${day(period.end)} (UTC): ${payload.valueMs} ms, metered after that period was invoiced`,
      metadata: { [LATE_USAGE_METADATA_KEY]: payload.identifier, studio_id: payload.studioId },
    },
    { idempotencyKey: `kd-late-usage-${payload.identifier}` },
  );
  await markRow(db, row.id, { lateInvoiceItem: item.id });
}

export async function deliverMeterEvent(db: Db, stripe: Stripe, row: OutboxRow): Promise<void> {
  const payload = row.payload as Partial<MeterEventPayload>;
  if (typeof payload.studioId !== "string" || typeof payload.identifier !== "string" || !Number.isInteger(payload.valueMs) || !Number.isInteger(payload.timestamp))
    throw new PermanentDeliveryError("meter-event payload lacks studioId, identifier, valueMs or timestamp");
  const account = await ensureOverageSubscription(db, stripe, payload.studioId);
  const at = meterTimestamp(payload as MeterEventPayload, account.subscriptionStartedAt);
  // An admin may have re-keyed it (Admin → Finance): Stripe gets the new identifier; the ledger key stays.
  const stripeIdentifier = typeof (payload as { meterIdentifier?: unknown }).meterIdentifier === "string" ? (payload as { meterIdentifier: string }).meterIdentifier : payload.identifier;
  try {
    if (account.stripeSubscriptionId) {
      const subscription = await stripe.subscriptions.retrieve(account.stripeSubscriptionId);
      const currentStart = subscription.items.data[0]?.current_period_start ?? subscription.start_date;
      // Only a period this subscription has invoiced is late; usage from before a replacement subscription started goes on its first period.
      if (at < currentStart && currentStart > subscription.start_date) {
        await billLate(db, stripe, row, payload as MeterEventPayload, account.stripeCustomerId, subscription.id, at, currentStart);
        return;
      }
    }
    await stripe.billing.meterEvents.create(
      {
        event_name: METER_EVENT_NAME,
        identifier: stripeIdentifier,
        timestamp: at,
        payload: { [METER_CUSTOMER_KEY]: account.stripeCustomerId, [METER_VALUE_KEY]: String(payload.valueMs) },
      },
      { idempotencyKey: `kd-meter-${stripeIdentifier}` },
    );
  } catch (error) {
    // Stripe already holds an event with this identifier (an earlier attempt got through): it counts once.
    if (error instanceof Stripe.errors.StripeInvalidRequestError && error.code === "resource_already_exists" && error.param === "identifier") return;
    if (error instanceof Stripe.errors.StripeInvalidRequestError) throw new PermanentDeliveryError(`Stripe refused the meter event: ${error.message}`);
    throw error;
  }
}

/** Makes the studio's overage subscription once overage is turned on (outbox kind "billing.overage_subscription"). */
export async function createOverageSubscription(db: Db, stripe: Stripe, row: OutboxRow): Promise<void> {
  const payload = row.payload as { studioId?: unknown };
  if (typeof payload.studioId !== "string") throw new PermanentDeliveryError("overage-subscription payload lacks studioId");
  await ensureOverageSubscription(db, stripe, payload.studioId);
}

/** Registers the handlers with the process's outbox dispatcher (server/startup.ts calls this). */
export function registerMeterEventHandler(db: Db): void {
  registerOutboxHandler(METER_EVENT_KIND, (row) => deliverMeterEvent(db, billingConfig().stripe, row));
  registerOutboxHandler(OVERAGE_SUBSCRIPTION_KIND, (row) => createOverageSubscription(db, billingConfig().stripe, row));
}
