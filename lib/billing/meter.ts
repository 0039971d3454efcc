/** Delivers queued overage to Stripe as meter events (outbox kind "stripe.meter_event"). */
import Stripe from "stripe";
import type { Db } from "@/db/client";
import type { OutboxRow } from "@/db/schema";
import { PermanentDeliveryError } from "@/lib/outbox/outbox";
import { registerOutboxHandler } from "@/lib/outbox/process";
import { ensureOverageSubscription, METER_CUSTOMER_KEY, METER_EVENT_NAME, METER_VALUE_KEY } from "./catalog";
import { billingConfig } from "./stripe";
import { METER_EVENT_KIND, OVERAGE_SUBSCRIPTION_KIND, type MeterEventPayload } from "./usage";

/** The meter-event time: the chunk's time, or the start of the studio's overage subscription if later. */
export function meterTimestamp(payload: MeterEventPayload, subscriptionStartedAt: Date | null): number {
  const start = subscriptionStartedAt ? Math.floor(subscriptionStartedAt.getTime() / 1000) : 0;
  return Math.max(payload.timestamp, start);
}

export async function deliverMeterEvent(db: Db, stripe: Stripe, row: OutboxRow): Promise<void> {
  const payload = row.payload as Partial<MeterEventPayload>;
  if (typeof payload.studioId !== "string" || typeof payload.identifier !== "string" || !Number.isInteger(payload.valueMs) || !Number.isInteger(payload.timestamp))
    throw new PermanentDeliveryError("meter-event payload lacks studioId, identifier, valueMs or timestamp");
  const account = await ensureOverageSubscription(db, stripe, payload.studioId);
  try {
    await stripe.billing.meterEvents.create(
      {
        event_name: METER_EVENT_NAME,
        identifier: payload.identifier,
        timestamp: meterTimestamp(payload as MeterEventPayload, account.subscriptionStartedAt),
        payload: { [METER_CUSTOMER_KEY]: account.stripeCustomerId, [METER_VALUE_KEY]: String(payload.valueMs) },
      },
      { idempotencyKey: `kd-meter-${payload.identifier}` },
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

/** Registers the handlers with the process's outbox dispatcher (db/startup.ts calls this). */
export function registerMeterEventHandler(db: Db): void {
  registerOutboxHandler(METER_EVENT_KIND, (row) => deliverMeterEvent(db, billingConfig().stripe, row));
  registerOutboxHandler(OVERAGE_SUBSCRIPTION_KIND, (row) => createOverageSubscription(db, billingConfig().stripe, row));
}
