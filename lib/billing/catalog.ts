/**
 * What Kickdrift sells, made once in Stripe (the fake or test mode) and found again by lookup key:
 * one price per credit pack, the overage meter and its metered monthly price. Then one customer and
 * one overage subscription per studio.
 */
import "server-only";
import { and, eq } from "drizzle-orm";
import Stripe from "stripe";
import type { DbOrTx } from "@/db/client";
import { memberships, studioBilling, studios, users, type StudioBilling } from "@/db/schema";
import { CREDIT_PACKS, OVERAGE_DAYS_UNTIL_DUE, OVERAGE_UNIT_AMOUNT_DECIMAL } from "./packs";

export const METER_EVENT_NAME = "kickdrift_overage_ms";
export const METER_CUSTOMER_KEY = "stripe_customer_id";
export const METER_VALUE_KEY = "value";
const OVERAGE_LOOKUP_KEY = "kickdrift_overage_ms_monthly";
/** A price change makes a new price under a new key; old sessions keep the price they were made with. */
export const packLookupKey = (pack: { id: string; priceCents: number }) => `kickdrift_${pack.id}_${pack.priceCents}`;

export interface Catalog {
  /** Stripe price id per pack id. */
  packPrices: Record<string, string>;
  meterId: string;
  overagePriceId: string;
}

const catalogs = new WeakMap<Stripe, Promise<Catalog>>();

/** The catalog for this client, made on first use (concurrent callers share one bootstrap). */
export function ensureCatalog(stripe: Stripe): Promise<Catalog> {
  let found = catalogs.get(stripe);
  if (!found) {
    found = bootstrap(stripe);
    catalogs.set(stripe, found);
    found.catch(() => catalogs.delete(stripe));
  }
  return found;
}

async function bootstrap(stripe: Stripe): Promise<Catalog> {
  const wanted = CREDIT_PACKS.map((p) => packLookupKey(p));
  const existing = await stripe.prices.list({ lookup_keys: [...wanted, OVERAGE_LOOKUP_KEY], active: true, limit: 100 });
  const byKey = new Map(existing.data.map((p) => [p.lookup_key, p]));
  const packPrices: Record<string, string> = {};
  for (const pack of CREDIT_PACKS) {
    const lookup = packLookupKey(pack);
    let price = byKey.get(lookup);
    if (!price) {
      price = await stripe.prices.create(
        {
          currency: pack.currency,
          unit_amount: pack.priceCents,
          lookup_key: lookup,
          product_data: { name: `Kickdrift ${pack.name} — ${pack.minutes} compute minutes`, metadata: { pack_id: pack.id } },
          metadata: { pack_id: pack.id, minutes: String(pack.minutes) },
        },
        { idempotencyKey: `kd-price-${lookup}` },
      );
    }
    packPrices[pack.id] = price.id;
  }
  const meters = await stripe.billing.meters.list({ status: "active", limit: 100 });
  let meter = meters.data.find((m) => m.event_name === METER_EVENT_NAME);
  meter ??= await stripe.billing.meters.create(
    {
      display_name: "Kickdrift overage compute (ms)",
      event_name: METER_EVENT_NAME,
      default_aggregation: { formula: "sum" },
      customer_mapping: { type: "by_id", event_payload_key: METER_CUSTOMER_KEY },
      value_settings: { event_payload_key: METER_VALUE_KEY },
    },
    { idempotencyKey: `kd-meter-${METER_EVENT_NAME}` },
  );
  let overage = byKey.get(OVERAGE_LOOKUP_KEY);
  overage ??= await stripe.prices.create(
    {
      currency: "usd",
      unit_amount_decimal: Stripe.Decimal.from(OVERAGE_UNIT_AMOUNT_DECIMAL),
      recurring: { interval: "month", usage_type: "metered", meter: meter.id },
      lookup_key: OVERAGE_LOOKUP_KEY,
      product_data: { name: "Kickdrift overage compute (per ms)" },
    },
    { idempotencyKey: `kd-price-${OVERAGE_LOOKUP_KEY}` },
  );
  return { packPrices, meterId: meter.id, overagePriceId: overage.id };
}

/** The owners' and finance people's addresses of a studio (receipts, invoices, low balance). */
export async function billingContacts(db: DbOrTx, studioId: string): Promise<string[]> {
  const rows = await db
    .select({ email: users.email, role: memberships.role })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.studioId, studioId));
  return rows.filter((r) => r.role === "owner" || r.role === "finance").map((r) => r.email).sort();
}

/**
 * The studio's Stripe customer, made on first use (a pack purchase, billing details, overage). The
 * creation call carries an idempotency key, so two concurrent first uses get the same customer.
 */
export async function ensureStudioCustomer(db: DbOrTx, stripe: Stripe, studioId: string): Promise<StudioBilling> {
  const [row] = await db.select().from(studioBilling).where(eq(studioBilling.studioId, studioId));
  if (row) return row;
  const [studio] = await db.select().from(studios).where(eq(studios.id, studioId));
  if (!studio) throw new Error(`studio ${studioId} does not exist`);
  const [owner] = await db
    .select({ email: users.email })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.studioId, studioId), eq(memberships.role, "owner")))
    .limit(1);
  const customer = await stripe.customers.create(
    { name: studio.name, ...(owner ? { email: owner.email } : {}), metadata: { studio_id: studioId } },
    { idempotencyKey: `kd-customer-${studioId}` },
  );
  await db.insert(studioBilling).values({ studioId, stripeCustomerId: customer.id }).onConflictDoNothing();
  const [again] = await db.select().from(studioBilling).where(eq(studioBilling.studioId, studioId));
  return again;
}

/**
 * Stripe's anchor for the overage subscription: the 1st of each month, 00:00:00 UTC. The first
 * period runs from the subscription's start to the next 1st; every later one is a calendar month,
 * the same month quotas, usage views and the Billing page count.
 */
export const OVERAGE_BILLING_CYCLE_ANCHOR = { day_of_month: 1, hour: 0, minute: 0, second: 0 } as const;

/**
 * The studio's overage subscription (and customer), made when overage is first needed: when overage
 * is turned on, or when metered overage is delivered. A studio that never allows overage has none,
 * so it gets no monthly $0 invoices. Idempotency keys make concurrent first uses share one.
 */
export async function ensureOverageSubscription(db: DbOrTx, stripe: Stripe, studioId: string): Promise<StudioBilling> {
  const account = await ensureStudioCustomer(db, stripe, studioId);
  if (account.stripeSubscriptionId) return account;
  const catalog = await ensureCatalog(stripe);
  const subscription = await stripe.subscriptions.create(
    {
      customer: account.stripeCustomerId,
      items: [{ price: catalog.overagePriceId }],
      collection_method: "send_invoice",
      days_until_due: OVERAGE_DAYS_UNTIL_DUE,
      billing_cycle_anchor_config: OVERAGE_BILLING_CYCLE_ANCHOR,
      metadata: { studio_id: studioId },
    },
    // After a subscription ended (customer.subscription.deleted) the replacement needs its own key, or Stripe would answer with the ended one.
    { idempotencyKey: account.endedSubscriptionId ? `kd-subscription-${studioId}-after-${account.endedSubscriptionId}` : `kd-subscription-${studioId}` },
  );
  const startedAt = new Date((subscription.items.data[0]?.current_period_start ?? subscription.start_date) * 1000);
  const [updated] = await db
    .update(studioBilling)
    // The first subscription's start stays: it dates the first metered usage the issued invoices are reconciled from.
    .set({ stripeSubscriptionId: subscription.id, subscriptionStartedAt: account.subscriptionStartedAt ?? startedAt })
    .where(eq(studioBilling.studioId, studioId))
    .returning();
  return updated;
}

/** The studio of a Stripe customer id, or null. */
export async function studioOfCustomer(db: DbOrTx, customerId: string): Promise<string | null> {
  const [row] = await db.select({ studioId: studioBilling.studioId }).from(studioBilling).where(eq(studioBilling.stripeCustomerId, customerId));
  return row?.studioId ?? null;
}
