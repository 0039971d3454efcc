import "server-only";
import { cardOutcome, storedCardOutcome, type CardOutcome } from "../cards";
import { clone, createdFilter, fieldsEqual, mustGet, paginate, type Ctx, type HandlerResult } from "../context";
import { cardDeclined, invalidParam, invalidRequest } from "../errors";
import { decimalToNumber, lineAmountCents, sumDecimal } from "../money";
import { applyMetadata, type Params } from "../params";
import { newId, type RecordedMeterEvent, type StripeObject } from "../store";
import { createHash } from "node:crypto";
import { ensurePaymentMethod, paymentMethodObject } from "./catalog";

const DAY_S = 86_400;

// ---------------------------------------------------------------- meters

export function createMeter(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["display_name", "event_name", "default_aggregation", "customer_mapping", "value_settings", "event_time_window"]);
  const displayName = params.requiredString("display_name", { max: 250 });
  const eventName = params.requiredString("event_name", { max: 100 });
  const aggregation = params.object("default_aggregation", { required: true }) as Params;
  aggregation.allowOnly(["formula"]);
  const formula = aggregation.requiredString("formula", { oneOf: ["sum", "count", "last"] });
  const mapping = params.object("customer_mapping");
  mapping?.allowOnly(["type", "event_payload_key"]);
  const mappingType = mapping ? mapping.requiredString("type", { oneOf: ["by_id"] }) : "by_id";
  const customerKey = mapping ? mapping.requiredString("event_payload_key", { max: 100 }) : "stripe_customer_id";
  const valueSettings = params.object("value_settings");
  valueSettings?.allowOnly(["event_payload_key"]);
  const valueKey = valueSettings ? valueSettings.requiredString("event_payload_key", { max: 100 }) : "value";
  const window = params.string("event_time_window", { oneOf: ["day", "hour"] }) ?? null;
  if (ctx.store.newestFirst("meters").some((m) => m.status === "active" && m.event_name === eventName)) {
    throw invalidParam("event_name", `An active meter with event_name '${eventName}' already exists.`);
  }
  const meter: StripeObject = {
    id: newId("mtr_test", 32),
    object: "billing.meter",
    created: ctx.now,
    customer_mapping: { event_payload_key: customerKey, type: mappingType },
    default_aggregation: { formula },
    display_name: displayName,
    event_name: eventName,
    event_time_window: window,
    livemode: false,
    status: "active",
    status_transitions: { deactivated_at: null },
    updated: ctx.now,
    value_settings: { event_payload_key: valueKey },
  };
  ctx.store.insert("meters", meter);
  ctx.emit("billing.meter.created", meter);
  return { body: meter };
}

export function retrieveMeter(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  return { body: mustGet(ctx.store, "meters", id) };
}

export function updateMeter(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly(["display_name"]);
  const meter = mustGet(ctx.store, "meters", id);
  const name = params.string("display_name", { max: 250 });
  if (name !== undefined) {
    const previous = { display_name: meter.display_name };
    meter.display_name = name;
    meter.updated = ctx.now;
    ctx.emit("billing.meter.updated", meter, previous);
  }
  return { body: meter };
}

export function setMeterActive(ctx: Ctx, params: Params, id: string, active: boolean): HandlerResult {
  params.allowOnly([]);
  const meter = mustGet(ctx.store, "meters", id);
  const wanted = active ? "active" : "inactive";
  if (meter.status === wanted) throw invalidRequest(`This meter is already ${wanted}.`);
  if (active && ctx.store.newestFirst("meters").some((m) => m.status === "active" && m.event_name === meter.event_name)) {
    throw invalidRequest(`Another active meter already uses event_name '${String(meter.event_name)}'.`);
  }
  meter.status = wanted;
  meter.status_transitions = { deactivated_at: active ? null : ctx.now };
  meter.updated = ctx.now;
  ctx.emit(active ? "billing.meter.reactivated" : "billing.meter.deactivated", meter, { status: active ? "inactive" : "active" });
  return { body: meter };
}

export function listMeters(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["limit", "starting_after", "ending_before", "status"]);
  const matches = fieldsEqual({ status: params.string("status", { oneOf: ["active", "inactive"] }) });
  const items = ctx.store.newestFirst("meters").filter(matches);
  return { body: paginate(items, params, "/v1/billing/meters", "billing.meter") };
}

// ---------------------------------------------------------------- meter events

const METER_EVENT_PAST_S = 35 * DAY_S;
const METER_EVENT_FUTURE_S = 5 * 60;

/**
 * Records usage. Stripe validates meter events partly asynchronously; the fake checks everything at
 * intake and answers 400 naming the payload field, so a mistake shows up in the test that made it.
 * A repeated `identifier` is rejected with `resource_already_exists` (Stripe enforces uniqueness).
 */
export function createMeterEvent(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["event_name", "payload", "identifier", "timestamp"]);
  const eventName = params.requiredString("event_name", { max: 100 });
  const payloadParams = params.object("payload", { required: true }) as Params;
  const identifier = params.string("identifier", { max: 100 }) ?? newId("mevt", 24);
  const timestamp = params.integer("timestamp") ?? ctx.now;
  if (timestamp < ctx.now - METER_EVENT_PAST_S || timestamp > ctx.now + METER_EVENT_FUTURE_S) {
    throw invalidParam("timestamp", `Timestamp must be within the past 35 calendar days or up to 5 minutes in the future (fake clock now: ${ctx.now}, got ${timestamp}).`);
  }
  const payload: Record<string, string> = {};
  for (const [k, v] of Object.entries(payloadParams.raw)) {
    if (typeof v !== "string") throw invalidParam(`payload[${k}]`, `payload[${k}] must be a string.`);
    payload[k] = v;
  }
  const meter = ctx.store.newestFirst("meters").find((m) => m.status === "active" && m.event_name === eventName);
  if (!meter) throw invalidParam("event_name", `No active meter was found for event_name '${eventName}'.`);
  const customerKey = (meter.customer_mapping as { event_payload_key: string }).event_payload_key;
  const valueKey = (meter.value_settings as { event_payload_key: string }).event_payload_key;
  const customerId = payload[customerKey];
  if (!customerId) throw invalidParam(`payload[${customerKey}]`, `Missing required param: payload[${customerKey}] (the meter maps events to customers by it).`, "parameter_missing");
  const customer = ctx.store.get("customers", customerId);
  if (!customer || customer.deleted) throw invalidParam(`payload[${customerKey}]`, `No such customer: '${customerId}'`, "resource_missing");
  const formula = (meter.default_aggregation as { formula: string }).formula;
  let value = payload[valueKey];
  if (value === undefined) {
    if (formula !== "count") throw invalidParam(`payload[${valueKey}]`, `Missing required param: payload[${valueKey}] (the meter's value key).`, "parameter_missing");
    value = "1";
  } else if (!/^\d+(\.\d{1,12})?$/.test(value)) {
    throw invalidParam(`payload[${valueKey}]`, `payload[${valueKey}] must be a non-negative number with at most 12 decimal places (got '${value}').`);
  }
  if (ctx.store.meterIdentifiers.has(identifier)) {
    throw invalidParam("identifier", `A meter event with identifier '${identifier}' already exists.`, "resource_already_exists");
  }
  const recorded: RecordedMeterEvent = {
    object: "billing.meter_event",
    created: ctx.now,
    event_name: eventName,
    identifier,
    livemode: false,
    payload,
    timestamp,
    meter: meter.id,
    customer: customerId,
    value,
  };
  ctx.store.data.meter_events.push(recorded);
  ctx.store.meterIdentifiers.add(identifier);
  const { meter: _m, customer: _c, value: _v, ...wire } = recorded;
  return { body: wire };
}

/** Aggregates a meter's events for a customer over [start, end) with the meter's formula, as a decimal string. */
export function aggregate(ctx: Ctx, meter: StripeObject, customer: string, start: number, end: number): string {
  const events = ctx.store.data.meter_events.filter((e) => e.meter === meter.id && e.customer === customer && e.timestamp >= start && e.timestamp < end);
  const formula = (meter.default_aggregation as { formula: string }).formula;
  if (formula === "count") return String(events.length);
  if (formula === "last") {
    if (events.length === 0) return "0";
    // Latest by event time; among equal timestamps the one received last.
    let last = events[0];
    for (const e of events) if (e.timestamp >= last.timestamp) last = e;
    return last.value;
  }
  return sumDecimal(events.map((e) => e.value));
}

const WINDOW_S: Record<string, number> = { hour: 3600, day: DAY_S };

export function listEventSummaries(ctx: Ctx, params: Params, meterId: string): HandlerResult {
  params.allowOnly(["customer", "start_time", "end_time", "value_grouping_window", "limit", "starting_after", "ending_before"]);
  const meter = mustGet(ctx.store, "meters", meterId);
  const customer = mustGet(ctx.store, "customers", params.requiredString("customer"), "customer").id;
  const start = params.integer("start_time", { required: true, min: 0 }) as number;
  const end = params.integer("end_time", { required: true, min: 0 }) as number;
  const window = params.string("value_grouping_window", { oneOf: ["hour", "day"] });
  if (start % 60 !== 0) throw invalidParam("start_time", "start_time must be aligned with minute boundaries.");
  if (end % 60 !== 0) throw invalidParam("end_time", "end_time must be aligned with minute boundaries.");
  if (end <= start) throw invalidParam("end_time", "end_time must be after start_time.");
  const bucket = window ? WINDOW_S[window] : end - start;
  if (window && start % bucket !== 0) throw invalidParam("start_time", `start_time must be aligned with ${window} boundaries when value_grouping_window is ${window}.`);
  if (window && end % bucket !== 0) throw invalidParam("end_time", `end_time must be aligned with ${window} boundaries when value_grouping_window is ${window}.`);
  const summaries: StripeObject[] = [];
  for (let t = start; t < end; t += bucket) {
    const bucketEnd = Math.min(t + bucket, end);
    const id = `mtrusg_test_${createHash("sha256").update(`${meter.id}|${customer}|${t}|${bucketEnd}`).digest("hex").slice(0, 40)}`;
    summaries.push({
      id,
      object: "billing.meter_event_summary",
      aggregated_value: decimalToNumber(aggregate(ctx, meter, customer, t, bucketEnd)),
      end_time: bucketEnd,
      livemode: false,
      meter: meter.id,
      start_time: t,
    });
  }
  summaries.reverse(); // newest window first, like every other Stripe list in the fake
  return { body: paginate(summaries, params, `/v1/billing/meters/${meter.id}/event_summaries`, "billing.meter_event_summary") };
}

// ---------------------------------------------------------------- subscriptions

/** Adds `count` intervals in UTC calendar terms, clamping to the month's last day (Jan 31 + 1 month = Feb 28/29). */
export function addInterval(fromUnix: number, interval: string, count: number): number {
  const d = new Date(fromUnix * 1000);
  if (interval === "day") return fromUnix + count * DAY_S;
  if (interval === "week") return fromUnix + count * 7 * DAY_S;
  const months = interval === "year" ? count * 12 : count;
  const y = d.getUTCFullYear();
  const m = d.getUTCMonth() + months;
  const targetYear = y + Math.floor(m / 12);
  const targetMonth = ((m % 12) + 12) % 12;
  const lastDay = new Date(Date.UTC(targetYear, targetMonth + 1, 0)).getUTCDate();
  const day = Math.min(d.getUTCDate(), lastDay);
  return Math.floor(Date.UTC(targetYear, targetMonth, day, d.getUTCHours(), d.getUTCMinutes(), d.getUTCSeconds()) / 1000);
}

/** The end of the period that starts at `start`, counted from the anchor so months do not drift. */
function periodEndAfter(anchor: number, start: number, interval: string, count: number): number {
  let k = 1;
  let end = addInterval(anchor, interval, count * k);
  while (end <= start) {
    k += 1;
    end = addInterval(anchor, interval, count * k);
  }
  return end;
}

function planFromPrice(price: StripeObject): StripeObject {
  const recurring = price.recurring as { interval: string; interval_count: number; meter: string | null; usage_type: string };
  return {
    id: price.id,
    object: "plan",
    active: price.active,
    amount: price.unit_amount,
    amount_decimal: price.unit_amount_decimal,
    billing_scheme: "per_unit",
    created: price.created,
    currency: price.currency,
    interval: recurring.interval,
    interval_count: recurring.interval_count,
    livemode: false,
    metadata: price.metadata,
    meter: recurring.meter,
    nickname: price.nickname,
    product: price.product,
    tiers_mode: null,
    transform_usage: null,
    trial_period_days: null,
    usage_type: recurring.usage_type,
  };
}

function subscriptionItems(sub: StripeObject): StripeObject[] {
  return (sub.items as { data: StripeObject[] }).data;
}

/**
 * Stripe's `billing_cycle_anchor` (a unix time, now or later) or `billing_cycle_anchor_config`
 * (mutually exclusive; monthly and yearly prices only): the anchor is the next occurrence of
 * day_of_month at hour:minute:second UTC, the day clamped to the month's last day. Without either,
 * the anchor is the start.
 */
function billingCycleAnchor(ctx: Ctx, params: Params, unit: string): { anchor: number; config: Record<string, number | null> | null } {
  const config = params.object("billing_cycle_anchor_config");
  if (config && params.has("billing_cycle_anchor")) throw invalidParam("billing_cycle_anchor_config", "You may only specify one of these parameters: billing_cycle_anchor, billing_cycle_anchor_config.");
  if (params.has("billing_cycle_anchor")) {
    const at = params.integer("billing_cycle_anchor", { min: 0 }) as number;
    if (at < ctx.now) throw invalidParam("billing_cycle_anchor", `billing_cycle_anchor cannot be in the past (fake clock now: ${ctx.now}, got ${at}).`);
    return { anchor: at, config: null };
  }
  if (!config) return { anchor: ctx.now, config: null };
  config.allowOnly(["day_of_month", "hour", "minute", "second", "month"]);
  if (unit !== "month" && unit !== "year") throw invalidParam("billing_cycle_anchor_config", "billing_cycle_anchor_config is only valid with monthly and yearly price intervals.");
  const day = config.integer("day_of_month", { required: true, min: 1, max: 31 }) as number;
  const hour = config.integer("hour", { min: 0, max: 23 }) ?? 0;
  const minute = config.integer("minute", { min: 0, max: 59 }) ?? 0;
  const second = config.integer("second", { min: 0, max: 59 }) ?? 0;
  if (config.has("month")) throw invalidParam(config.name("month"), "The fake anchors monthly cycles only; month is not supported.");
  const now = new Date(ctx.now * 1000);
  const at = (year: number, month: number) => {
    const lastDay = new Date(Date.UTC(year, month + 1, 0)).getUTCDate();
    return Math.floor(Date.UTC(year, month, Math.min(day, lastDay), hour, minute, second) / 1000);
  };
  let anchor = at(now.getUTCFullYear(), now.getUTCMonth());
  if (anchor < ctx.now) anchor = at(now.getUTCFullYear(), now.getUTCMonth() + 1);
  return { anchor, config: { day_of_month: day, hour, minute, month: null, second } };
}

export function createSubscription(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["customer", "items", "metadata", "collection_method", "days_until_due", "default_payment_method", "description", "payment_behavior", "off_session", "proration_behavior", "cancel_at_period_end", "billing_cycle_anchor", "billing_cycle_anchor_config"]);
  const customer = mustGet(ctx.store, "customers", params.requiredString("customer"), "customer");
  if (customer.deleted) throw invalidParam("customer", `No such customer: '${customer.id}'`, "resource_missing");
  const collectionMethod = params.string("collection_method", { oneOf: ["charge_automatically", "send_invoice"] }) ?? "charge_automatically";
  const daysUntilDue = params.integer("days_until_due", { min: 0, max: 730 });
  if (collectionMethod === "send_invoice" && daysUntilDue === undefined) throw invalidParam("days_until_due", "Missing required param: days_until_due (required when collection_method is send_invoice).", "parameter_missing");
  if (collectionMethod === "charge_automatically" && daysUntilDue !== undefined) throw invalidParam("days_until_due", "days_until_due can only be set when collection_method is send_invoice.");
  const defaultPm = params.nullableString("default_payment_method");
  if (defaultPm) ensurePaymentMethod(ctx, defaultPm, "default_payment_method");
  params.string("payment_behavior", { oneOf: ["allow_incomplete", "default_incomplete", "error_if_incomplete", "pending_if_incomplete"] });
  params.boolean("off_session");
  params.string("proration_behavior", { oneOf: ["always_invoice", "create_prorations", "none"] });
  const itemParams = params.array("items", { required: true, maxItems: 20 });
  if (itemParams.length === 0) throw invalidParam("items", "items must contain at least one item.");
  const id = newId("sub", 24);
  const start = ctx.now;
  let interval: { interval: string; interval_count: number } | null = null;
  let currency: string | null = null;
  const items = itemParams.map((item) => {
    item.allowOnly(["price", "quantity", "metadata"]);
    const price = mustGet(ctx.store, "prices", item.requiredString("price"), item.name("price"));
    const recurring = price.recurring as { interval: string; interval_count: number; usage_type: string } | null;
    if (!recurring) throw invalidParam(item.name("price"), `The price ${price.id} is a one-time price; subscriptions take recurring prices.`);
    if (recurring.usage_type !== "metered") {
      throw invalidParam(item.name("price"), `The fake bills metered prices only (usage in arrears); ${price.id} is licensed.`);
    }
    if (item.has("quantity")) throw invalidParam(item.name("quantity"), "Quantity cannot be set for metered prices.");
    if (interval && (interval.interval !== recurring.interval || interval.interval_count !== recurring.interval_count)) {
      throw invalidParam(item.name("price"), "All prices on a subscription must have the same recurring interval.");
    }
    if (currency && currency !== price.currency) throw invalidParam(item.name("price"), "All prices on a subscription must share one currency.");
    interval = { interval: recurring.interval, interval_count: recurring.interval_count };
    currency = price.currency as string;
    return { price, metadata: applyMetadata({}, item.metadata()) };
  });
  const { interval: unit, interval_count: count } = interval as unknown as { interval: string; interval_count: number };
  const { anchor, config: anchorConfig } = billingCycleAnchor(ctx, params, unit);
  // A later anchor makes a short first period [now, anchor); usage in arrears has nothing to prorate.
  const end = anchor > start ? anchor : addInterval(start, unit, count);
  const sub: StripeObject = {
    id,
    object: "subscription",
    application: null,
    application_fee_percent: null,
    automatic_tax: { disabled_reason: null, enabled: false, liability: null },
    billing_cycle_anchor: anchor,
    billing_cycle_anchor_config: anchorConfig,
    billing_mode: { flexible: null, type: "classic" },
    billing_thresholds: null,
    cancel_at: null,
    cancel_at_period_end: params.boolean("cancel_at_period_end") ?? false,
    canceled_at: null,
    cancellation_details: { comment: null, feedback: null, reason: null },
    collection_method: collectionMethod,
    created: ctx.now,
    currency,
    customer: customer.id,
    customer_account: null,
    days_until_due: daysUntilDue ?? null,
    default_payment_method: defaultPm ?? null,
    default_source: null,
    default_tax_rates: [],
    description: params.nullableString("description", 500) ?? null,
    discounts: [],
    ended_at: null,
    invoice_settings: { account_tax_ids: null, issuer: { type: "self" } },
    items: {
      object: "list",
      data: items.map(({ price, metadata }) => ({
        id: newId("si", 14),
        object: "subscription_item",
        billing_thresholds: null,
        created: ctx.now,
        current_period_end: end,
        current_period_start: start,
        discounts: [],
        metadata,
        plan: planFromPrice(price),
        price: clone(price),
        subscription: id,
        tax_rates: [],
      })),
      has_more: false,
      total_count: items.length,
      url: `/v1/subscription_items?subscription=${id}`,
    },
    latest_invoice: null,
    livemode: false,
    metadata: applyMetadata({}, params.metadata()),
    next_pending_invoice_item_invoice: null,
    on_behalf_of: null,
    pause_collection: null,
    payment_settings: { payment_method_options: null, payment_method_types: null, save_default_payment_method: "off" },
    pending_invoice_item_interval: null,
    pending_setup_intent: null,
    pending_update: null,
    schedule: null,
    start_date: start,
    status: "active",
    test_clock: null,
    transfer_data: null,
    trial_end: null,
    trial_settings: { end_behavior: { missing_payment_method: "create_invoice" } },
    trial_start: null,
  };
  ctx.store.insert("subscriptions", sub);
  ctx.emit("customer.subscription.created", sub);
  return { body: sub };
}

export function retrieveSubscription(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  return { body: mustGet(ctx.store, "subscriptions", id) };
}

export function updateSubscription(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly(["metadata", "cancel_at_period_end", "default_payment_method", "description"]);
  const sub = mustGet(ctx.store, "subscriptions", id);
  if (sub.status === "canceled") throw invalidRequest("A canceled subscription can only update its cancellation_details and metadata.");
  const previous: Record<string, unknown> = {};
  const set = (key: string, value: unknown) => {
    if (value === undefined) return;
    previous[key] = sub[key];
    sub[key] = value;
  };
  set("metadata", params.has("metadata") ? applyMetadata(sub.metadata as Record<string, string>, params.metadata()) : undefined);
  set("cancel_at_period_end", params.boolean("cancel_at_period_end"));
  const pm = params.nullableString("default_payment_method");
  if (pm) ensurePaymentMethod(ctx, pm, "default_payment_method");
  set("default_payment_method", pm);
  set("description", params.nullableString("description", 500));
  if (sub.cancel_at_period_end) sub.cancel_at = subscriptionItems(sub)[0].current_period_end;
  else sub.cancel_at = null;
  ctx.emit("customer.subscription.updated", sub, previous);
  return { body: sub };
}

export function listSubscriptions(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["limit", "starting_after", "ending_before", "customer", "price", "status", "created", "collection_method"]);
  const customer = params.string("customer");
  const price = params.string("price");
  const status = params.string("status", { oneOf: ["active", "past_due", "unpaid", "canceled", "incomplete", "incomplete_expired", "trialing", "paused", "all", "ended"] });
  const matches = fieldsEqual({ customer, collection_method: params.string("collection_method", { oneOf: ["charge_automatically", "send_invoice"] }) });
  const created = createdFilter(params);
  const items = ctx.store.newestFirst("subscriptions").filter((s) => {
    // Stripe's default list leaves out canceled subscriptions.
    const statusOk = status === "all" ? true : status === "ended" ? s.status === "canceled" : status === undefined ? s.status !== "canceled" : s.status === status;
    return (
      statusOk &&
      matches(s) &&
      (price === undefined || subscriptionItems(s).some((it) => (it.price as StripeObject).id === price)) &&
      created(s)
    );
  });
  return { body: paginate(items, params, "/v1/subscriptions", "subscription") };
}

export function cancelSubscription(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly(["invoice_now", "prorate", "cancellation_details"]);
  const sub = mustGet(ctx.store, "subscriptions", id);
  const invoiceNow = params.boolean("invoice_now") ?? false;
  params.boolean("prorate");
  const details = params.object("cancellation_details");
  details?.allowOnly(["comment", "feedback"]);
  const comment = details?.nullableString("comment") ?? null;
  const feedback = details?.string("feedback", { oneOf: ["customer_service", "low_quality", "missing_features", "other", "switched_service", "too_complex", "too_expensive", "unused"] }) ?? null;
  if (sub.status === "canceled") throw invalidRequest(`This subscription (${id}) has already been canceled.`, "id");
  if (invoiceNow) invoiceSubscriptionPeriod(ctx, sub, ctx.now, { finalize: true, billingReason: "subscription_cycle" });
  endSubscription(ctx, sub, { comment, feedback, reason: "cancellation_requested" });
  return { body: sub };
}

function endSubscription(ctx: Ctx, sub: StripeObject, details: { comment: string | null; feedback: string | null; reason: string }): void {
  const previous = { status: sub.status, canceled_at: sub.canceled_at, ended_at: sub.ended_at };
  sub.status = "canceled";
  sub.canceled_at = ctx.now;
  sub.ended_at = ctx.now;
  sub.cancellation_details = details;
  ctx.emit("customer.subscription.deleted", sub, previous);
}

// ---------------------------------------------------------------- invoices

export function baseInvoice(ctx: Ctx, customer: StripeObject, fields: { subscription: StripeObject | null; periodStart: number; periodEnd: number; billingReason: string; collectionMethod: string; daysUntilDue: number | null; description: string | null; metadata: Record<string, string>; autoAdvance: boolean }): StripeObject {
  const id = newId("in", 24);
  return {
    id,
    object: "invoice",
    account_country: "US",
    account_name: "Kickdrift (local Stripe fake)",
    account_tax_ids: null,
    amount_due: 0,
    amount_overpaid: 0,
    amount_paid: 0,
    amount_remaining: 0,
    amount_shipping: 0,
    application: null,
    attempt_count: 0,
    attempted: false,
    auto_advance: fields.autoAdvance,
    automatic_tax: { disabled_reason: null, enabled: false, liability: null, provider: null, status: null },
    automatically_finalizes_at: null,
    billing_reason: fields.billingReason,
    collection_method: fields.collectionMethod,
    created: ctx.now,
    currency: (fields.subscription?.currency as string | undefined) ?? "usd",
    // Copied from the customer when the invoice is made, as Stripe does: later edits do not rewrite issued documents.
    custom_fields: clone((customer.invoice_settings as { custom_fields?: unknown } | null)?.custom_fields ?? null),
    customer: customer.id,
    customer_account: null,
    customer_address: clone(customer.address ?? null),
    customer_email: customer.email ?? null,
    customer_name: customer.name ?? null,
    customer_phone: customer.phone ?? null,
    customer_shipping: null,
    customer_tax_exempt: "none",
    customer_tax_ids: [],
    default_payment_method: null,
    default_source: null,
    default_tax_rates: [],
    description: fields.description,
    discounts: [],
    due_date: null,
    effective_at: null,
    ending_balance: null,
    footer: null,
    from_invoice: null,
    hosted_invoice_url: null,
    invoice_pdf: null,
    issuer: { type: "self" },
    last_finalization_error: null,
    latest_revision: null,
    lines: { object: "list", data: [], has_more: false, total_count: 0, url: `/v1/invoices/${id}/lines` },
    livemode: false,
    metadata: fields.metadata,
    next_payment_attempt: null,
    number: null,
    on_behalf_of: null,
    parent: fields.subscription
      ? { quote_details: null, subscription_details: { metadata: clone(fields.subscription.metadata), subscription: fields.subscription.id }, type: "subscription_details" }
      : null,
    payment_settings: { default_mandate: null, payment_method_options: null, payment_method_types: null },
    period_end: fields.periodEnd,
    period_start: fields.periodStart,
    post_payment_credit_notes_amount: 0,
    pre_payment_credit_notes_amount: 0,
    receipt_number: null,
    rendering: null,
    shipping_cost: null,
    shipping_details: null,
    starting_balance: 0,
    statement_descriptor: null,
    status: "draft",
    status_transitions: { finalized_at: null, marked_uncollectible_at: null, paid_at: null, voided_at: null },
    subtotal: 0,
    subtotal_excluding_tax: 0,
    test_clock: null,
    total: 0,
    total_discount_amounts: [],
    total_excluding_tax: 0,
    total_pretax_credit_amounts: [],
    total_taxes: [],
    webhooks_delivered_at: null,
  };
}

export function setInvoiceLines(invoice: StripeObject, lines: StripeObject[]): void {
  const total = lines.reduce((sum, l) => sum + (l.amount as number), 0);
  invoice.lines = { object: "list", data: lines, has_more: false, total_count: lines.length, url: `/v1/invoices/${invoice.id}/lines` };
  invoice.subtotal = total;
  invoice.subtotal_excluding_tax = total;
  invoice.total = total;
  invoice.total_excluding_tax = total;
  invoice.amount_due = total;
  invoice.amount_remaining = total;
}

/**
 * Bills a subscription's metered usage for [current period start, periodEnd) and rolls the period on.
 * Each line: meter total over the period × the price's unit amount, rounded once to whole cents.
 */
/**
 * The invoice for a subscription's period ending at `periodEnd`. With `finalize` it is finalised (and
 * charged when a card is on file) at once, or — with `draftWindowS` > 0, as Stripe does for renewals —
 * left a draft with `automatically_finalizes_at` = periodEnd + draftWindowS, finalised then by
 * finalizeDueDrafts (Stripe: "about one hour" after the invoice is created).
 */
export function invoiceSubscriptionPeriod(ctx: Ctx, sub: StripeObject, periodEnd: number, opts: { finalize: boolean; billingReason: string; draftWindowS?: number }): StripeObject {
  const customer = mustGet(ctx.store, "customers", sub.customer as string);
  const items = subscriptionItems(sub);
  const periodStart = items[0].current_period_start as number;
  const invoice = baseInvoice(ctx, customer, {
    subscription: sub,
    periodStart,
    periodEnd,
    billingReason: opts.billingReason,
    collectionMethod: sub.collection_method as string,
    daysUntilDue: sub.days_until_due as number | null,
    description: null,
    metadata: {},
    autoAdvance: opts.finalize,
  });
  const lines: StripeObject[] = items.map((item) => {
    const price = item.price as StripeObject;
    const meterId = (price.recurring as { meter: string }).meter;
    const meter = mustGet(ctx.store, "meters", meterId);
    const quantity = aggregate(ctx, meter, customer.id, periodStart, periodEnd);
    const amount = lineAmountCents(quantity, price.unit_amount_decimal as string);
    const product = ctx.store.get("products", price.product as string);
    const productName = (product?.name as string | undefined) ?? "usage";
    const isWhole = /^\d+$/.test(quantity);
    return invoiceLine(invoice.id, {
      amount,
      currency: price.currency,
      description: `${quantity} × ${productName} (at ${price.unit_amount_decimal} ${String(price.currency).toUpperCase()} cents / unit)`,
      parent: {
        invoice_item_details: null,
        subscription_item_details: { invoice_item: null, proration: false, proration_details: { credited_items: null }, subscription: sub.id, subscription_item: item.id },
        type: "subscription_item_details",
      },
      period: { end: periodEnd, start: periodStart },
      pricing: { price_details: { price: price.id, product: price.product }, type: "price_details", unit_amount_decimal: price.unit_amount_decimal },
      quantity: isWhole ? Number(quantity) : null,
      quantity_decimal: quantity,
      subscription: sub.id,
    });
  });
  // Pending invoice items of this subscription (or of the customer with none named) each become their own line.
  for (const pending of ctx.store.newestFirst("invoiceitems").reverse()) {
    if (pending.customer !== customer.id || pending.invoice !== null) continue;
    const itemSub = (pending.parent as { subscription_details: { subscription: string } | null } | null)?.subscription_details?.subscription ?? null;
    if (itemSub !== null && itemSub !== sub.id) continue;
    pending.invoice = invoice.id;
    lines.push(invoiceItemLine(pending, invoice.id));
  }
  setInvoiceLines(invoice, lines);
  ctx.store.insert("invoices", invoice);
  for (const item of items) {
    item.current_period_start = periodEnd;
    item.current_period_end = periodEndAfter(sub.billing_cycle_anchor as number, periodEnd, (item.price as StripeObject & { recurring: { interval: string } }).recurring.interval, (item.price as StripeObject & { recurring: { interval_count: number } }).recurring.interval_count);
  }
  sub.latest_invoice = invoice.id;
  const draftWindowS = opts.draftWindowS ?? 0;
  if (opts.finalize && draftWindowS > 0) invoice.automatically_finalizes_at = periodEnd + draftWindowS;
  ctx.emit("invoice.created", invoice);
  if (opts.finalize && draftWindowS === 0) advanceDraftInvoice(ctx, invoice);
  return invoice;
}

/**
 * What Stripe does when a subscription's draft is finalised automatically: finalise it and, collected
 * automatically with a card on file (the subscription's, else the customer's default) at that moment,
 * charge it.
 */
function advanceDraftInvoice(ctx: Ctx, invoice: StripeObject): void {
  finalizeInvoiceObject(ctx, invoice);
  if (invoice.status !== "open" || invoice.collection_method !== "charge_automatically") return;
  const subId = (invoice.parent as { subscription_details: { subscription: string } } | null)?.subscription_details?.subscription;
  const sub = subId ? ctx.store.get("subscriptions", subId) : undefined;
  const customer = mustGet(ctx.store, "customers", invoice.customer as string);
  const pm = (sub?.default_payment_method as string | null | undefined) ?? (customer.invoice_settings as { default_payment_method: string | null }).default_payment_method;
  if (pm) chargeInvoice(ctx, invoice, pm, { throwOnDecline: false });
}

/** Drafts waiting for their automatic finalisation (auto_advance, automatically_finalizes_at set). */
function waitingDrafts(ctx: Ctx): StripeObject[] {
  return ctx.store.newestFirst("invoices").filter((i) => i.status === "draft" && i.auto_advance === true && typeof i.automatically_finalizes_at === "number");
}

/** The earliest automatic finalisation at or before `to` (unix s), or null. */
export function nextDraftDeadline(ctx: Ctx, to: number): number | null {
  let best: number | null = null;
  for (const draft of waitingDrafts(ctx)) {
    const at = draft.automatically_finalizes_at as number;
    if (at <= to && (best === null || at < best)) best = at;
  }
  return best;
}

/** Finalises (and charges) every draft whose automatic finalisation time the fake clock has reached, oldest first. */
export function finalizeDueDrafts(ctx: Ctx): StripeObject[] {
  const due = waitingDrafts(ctx)
    .filter((d) => (d.automatically_finalizes_at as number) <= ctx.now)
    .sort((a, b) => (a.automatically_finalizes_at as number) - (b.automatically_finalizes_at as number) || ctx.store.seqOf(a.id) - ctx.store.seqOf(b.id));
  for (const draft of due) advanceDraftInvoice(ctx, draft);
  return due;
}

export function finalizeInvoiceObject(ctx: Ctx, invoice: StripeObject): void {
  const customer = mustGet(ctx.store, "customers", invoice.customer as string);
  const sequence = customer.next_invoice_sequence as number;
  customer.next_invoice_sequence = sequence + 1;
  invoice.number = `${String(customer.invoice_prefix)}-${String(sequence).padStart(4, "0")}`;
  invoice.status = "open";
  invoice.effective_at = ctx.now;
  // Stripe sets both links at finalisation; the fake serves them (server.ts: /i/:id and /i/:id/pdf).
  invoice.hosted_invoice_url = `${ctx.baseUrl}/i/${invoice.id}`;
  invoice.invoice_pdf = `${ctx.baseUrl}/i/${invoice.id}/pdf`;
  invoice.status_transitions = { ...(invoice.status_transitions as object), finalized_at: ctx.now };
  invoice.automatically_finalizes_at = null;
  if (invoice.collection_method === "send_invoice") {
    const sub = invoice.parent ? ctx.store.get("subscriptions", (invoice.parent as { subscription_details: { subscription: string } }).subscription_details.subscription) : undefined;
    const days = (sub?.days_until_due as number | null | undefined) ?? 30;
    invoice.due_date = ctx.now + days * DAY_S;
  }
  ctx.emit("invoice.finalized", invoice, { status: "draft" });
  if ((invoice.amount_due as number) === 0) markPaid(ctx, invoice, "open");
}

export function markPaid(ctx: Ctx, invoice: StripeObject, previousStatus: string): void {
  invoice.amount_paid = invoice.amount_due;
  invoice.amount_remaining = 0;
  invoice.status = "paid";
  invoice.status_transitions = { ...(invoice.status_transitions as object), paid_at: ctx.now };
  invoice.ending_balance = 0;
  invoice.auto_advance = false;
  ctx.emit("invoice.paid", invoice, { status: previousStatus });
  ctx.emit("invoice.payment_succeeded", invoice, { status: previousStatus });
}

function chargeInvoice(ctx: Ctx, invoice: StripeObject, paymentMethodId: string, opts: { throwOnDecline: boolean; param?: string }): void {
  const pm = ensurePaymentMethod(ctx, paymentMethodId, opts.param ?? "payment_method");
  const outcome = storedCardOutcome((pm.card as { last4: string }).last4);
  invoice.attempt_count = (invoice.attempt_count as number) + 1;
  invoice.attempted = true;
  if (outcome.ok) {
    invoice.default_payment_method = pm.id;
    markPaid(ctx, invoice, String(invoice.status));
    return;
  }
  invoice.next_payment_attempt = null;
  ctx.emit("invoice.payment_failed", invoice);
  if (opts.throwOnDecline) throw cardDeclined(outcome.declineCode ?? "generic_decline", outcome.message);
}

export function createInvoice(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["customer", "auto_advance", "collection_method", "days_until_due", "description", "metadata", "currency", "pending_invoice_items_behavior"]);
  const customer = mustGet(ctx.store, "customers", params.requiredString("customer"), "customer");
  const collectionMethod = params.string("collection_method", { oneOf: ["charge_automatically", "send_invoice"] }) ?? "charge_automatically";
  const daysUntilDue = params.integer("days_until_due", { min: 0, max: 730 }) ?? null;
  params.string("pending_invoice_items_behavior", { oneOf: ["exclude", "include"] });
  const invoice = baseInvoice(ctx, customer, {
    subscription: null,
    periodStart: ctx.now,
    periodEnd: ctx.now,
    billingReason: "manual",
    collectionMethod,
    daysUntilDue,
    description: params.nullableString("description", 1500) ?? null,
    metadata: applyMetadata({}, params.metadata()),
    autoAdvance: params.boolean("auto_advance") ?? false,
  });
  const currency = params.string("currency");
  if (currency) invoice.currency = currency.toLowerCase();
  ctx.store.insert("invoices", invoice);
  ctx.emit("invoice.created", invoice);
  return { body: invoice };
}

export function retrieveInvoice(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  return { body: mustGet(ctx.store, "invoices", id) };
}

export function listInvoices(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["limit", "starting_after", "ending_before", "customer", "subscription", "status", "created", "collection_method", "due_date"]);
  const customer = params.string("customer");
  const subscription = params.string("subscription");
  const matches = fieldsEqual({
    customer,
    status: params.string("status", { oneOf: ["draft", "open", "paid", "uncollectible", "void"] }),
    collection_method: params.string("collection_method", { oneOf: ["charge_automatically", "send_invoice"] }),
  });
  const created = createdFilter(params);
  const items = ctx.store
    .newestFirst("invoices")
    .filter((inv) => matches(inv) && (subscription === undefined || (inv.parent as { subscription_details?: { subscription: string } } | null)?.subscription_details?.subscription === subscription) && created(inv));
  return { body: paginate(items, params, "/v1/invoices", "invoice") };
}

export function listInvoiceLines(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly(["limit", "starting_after", "ending_before"]);
  const invoice = mustGet(ctx.store, "invoices", id);
  const lines = (invoice.lines as { data: StripeObject[] }).data;
  return { body: paginate(lines, params, `/v1/invoices/${id}/lines`, "line item") };
}

export function finalizeInvoice(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly(["auto_advance"]);
  const invoice = mustGet(ctx.store, "invoices", id);
  if (invoice.status !== "draft") {
    throw invalidRequest("This invoice is already finalized, you can't re-finalize a non-draft invoice.", undefined, "invoice_not_editable");
  }
  const autoAdvance = params.boolean("auto_advance");
  if (autoAdvance !== undefined) invoice.auto_advance = autoAdvance;
  finalizeInvoiceObject(ctx, invoice);
  return { body: invoice };
}

export function payInvoice(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly(["paid_out_of_band", "payment_method", "off_session", "forgive", "source"]);
  const invoice = mustGet(ctx.store, "invoices", id);
  const outOfBand = params.boolean("paid_out_of_band") ?? false;
  const pmParam = params.string("payment_method");
  params.boolean("off_session");
  params.boolean("forgive");
  if (invoice.status === "paid") throw invalidRequest("Invoice is already paid");
  // Stripe: an uncollectible invoice can still be paid (status uncollectible → paid); a void one cannot.
  if (invoice.status === "void") throw invalidRequest(`This invoice is ${String(invoice.status)} and cannot be paid.`);
  if (invoice.status === "draft") finalizeInvoiceObject(ctx, invoice);
  if (invoice.status === "paid") return { body: invoice };
  if (outOfBand) {
    markPaid(ctx, invoice, String(invoice.status));
    return { body: invoice };
  }
  const customer = mustGet(ctx.store, "customers", invoice.customer as string);
  const sub = invoice.parent ? ctx.store.get("subscriptions", (invoice.parent as { subscription_details: { subscription: string } }).subscription_details.subscription) : undefined;
  const pm = pmParam ?? (sub?.default_payment_method as string | null | undefined) ?? (customer.invoice_settings as { default_payment_method: string | null }).default_payment_method;
  if (!pm) {
    throw invalidRequest(`Cannot charge a customer that has no active card (${customer.id} has no default payment method).`, "payment_method");
  }
  chargeInvoice(ctx, invoice, pm, { throwOnDecline: true, param: pmParam ? "payment_method" : "customer" });
  return { body: invoice };
}

/**
 * Paying an invoice on its hosted page (hosted_invoice_url): Stripe's page takes a card from whoever
 * holds the link, charges the amount remaining, and the invoice moves to paid (invoice.paid) — or the
 * card is declined and the invoice stays as it was (invoice.payment_failed). Open and uncollectible
 * invoices can be paid; a draft, paid or void one cannot.
 */
export function payInvoiceFromHostedPage(ctx: Ctx, invoiceId: string, cardNumber: string): { kind: "paid" | "not_payable"; invoice: StripeObject } | { kind: "declined"; invoice: StripeObject; outcome: Extract<CardOutcome, { ok: false }> } {
  const invoice = mustGet(ctx.store, "invoices", invoiceId);
  if (invoice.status !== "open" && invoice.status !== "uncollectible") return { kind: "not_payable", invoice };
  const outcome = cardOutcome(cardNumber);
  // A mistyped number never reaches the bank: no attempt is counted.
  if (!outcome.ok && outcome.code === "incorrect_number") return { kind: "declined", invoice, outcome };
  const digits = cardNumber.replace(/\D/g, "");
  const pm = ctx.store.insert("payment_methods", paymentMethodObject(ctx, newId("pm", 24), digits, null));
  if (!outcome.ok && storedCardOutcome(digits.slice(-4)).ok) {
    // Refused though its last four digits match no declining test card (a live card in test mode):
    // charging it as a stored card would pass, so the attempt fails here.
    invoice.attempt_count = (invoice.attempt_count as number) + 1;
    invoice.attempted = true;
    ctx.emit("invoice.payment_failed", invoice);
    return { kind: "declined", invoice, outcome };
  }
  chargeInvoice(ctx, invoice, pm.id as string, { throwOnDecline: false });
  // chargeInvoice moved the status (the narrowing above no longer holds).
  if (String(invoice.status) === "paid") return { kind: "paid", invoice };
  return { kind: "declined", invoice, outcome: outcome.ok ? { ok: false, code: "card_declined", message: "Your card was declined." } : outcome };
}

export function voidInvoice(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  const invoice = mustGet(ctx.store, "invoices", id);
  // Stripe: "only possible for open or uncollectible invoices".
  if (invoice.status !== "open" && invoice.status !== "uncollectible") throw invalidRequest(`You can only void an open or uncollectible invoice; this one is ${String(invoice.status)}.`);
  const previousStatus = String(invoice.status);
  invoice.status = "void";
  invoice.amount_remaining = 0;
  invoice.status_transitions = { ...(invoice.status_transitions as object), voided_at: ctx.now };
  ctx.emit("invoice.voided", invoice, { status: previousStatus });
  return { body: invoice };
}

// ---------------------------------------------------------------- the test-clock stand-in

export interface ClosePeriodOptions {
  customer?: string;
  subscription?: string;
  /**
   * Leave the invoices as drafts (auto_advance false) instead of finalising them. By default they are
   * finalised at once, as if the draft window had passed (advance_clock keeps the window).
   */
  finalize?: boolean;
}

/** Ends the current period of every matching active subscription now, invoicing its usage. */
export function closePeriod(ctx: Ctx, opts: ClosePeriodOptions): StripeObject[] {
  const subs = ctx.store
    .newestFirst("subscriptions")
    .reverse()
    .filter((s) => s.status === "active" && (!opts.customer || s.customer === opts.customer) && (!opts.subscription || s.id === opts.subscription));
  return subs.map((sub) => closeSubscriptionPeriod(ctx, sub, ctx.now, opts.finalize ?? true));
}

/** One period end: the invoice for the usage, then the cancellation if it was asked for at period end. */
export function closeSubscriptionPeriod(ctx: Ctx, sub: StripeObject, periodEnd: number, finalize: boolean, draftWindowS = 0): StripeObject {
  const invoice = invoiceSubscriptionPeriod(ctx, sub, periodEnd, { finalize, billingReason: "subscription_cycle", draftWindowS });
  if (sub.cancel_at_period_end) endSubscription(ctx, sub, { comment: null, feedback: null, reason: "cancellation_requested" });
  return invoice;
}

/** Subscriptions whose period ends at or before `to`, each with that end: what a test clock advance crosses. */
export function nextPeriodBoundary(ctx: Ctx, to: number): { sub: StripeObject; end: number } | null {
  let best: { sub: StripeObject; end: number } | null = null;
  for (const sub of ctx.store.newestFirst("subscriptions").reverse()) {
    if (sub.status !== "active") continue;
    const end = subscriptionItems(sub)[0].current_period_end as number;
    if (end <= to && (!best || end < best.end)) best = { sub, end };
  }
  return best;
}


/**
 * POST /v1/invoices/:id/mark_uncollectible (Stripe API reference: "Marking an invoice as uncollectible
 * is useful for keeping track of bad debts"; no parameters; returns the invoice). Only an open
 * invoice can be marked; it can still be paid or voided afterwards.
 */
export function markUncollectible(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  const invoice = mustGet(ctx.store, "invoices", id);
  if (invoice.status !== "open") throw invalidRequest(`You can only mark an open invoice as uncollectible; this one is ${String(invoice.status)}.`);
  invoice.status = "uncollectible";
  invoice.status_transitions = { ...(invoice.status_transitions as object), marked_uncollectible_at: ctx.now };
  ctx.emit("invoice.marked_uncollectible", invoice, { status: "open" });
  return { body: invoice };
}

/**
 * invoice.overdue (Stripe's event list: "Occurs X number of days after an invoice becomes due", X set
 * in the account's automations; the fake takes X as `overdueNoticeDays`, default 0): once per invoice
 * still unpaid (open or uncollectible) whose due_date + X days the fake clock has reached.
 */
export function emitOverdueInvoices(ctx: Ctx, overdueNoticeDays = 0): StripeObject[] {
  const overdue: StripeObject[] = [];
  const told = new Set(
    ctx.store
      .newestFirst("events")
      .filter((e) => e.type === "invoice.overdue")
      .map((e) => ((e.data as { object: { id: string } }).object.id)),
  );
  for (const invoice of ctx.store.newestFirst("invoices").reverse()) {
    const due = invoice.due_date as number | null;
    if (due === null || due + overdueNoticeDays * DAY_S > ctx.now || told.has(invoice.id)) continue;
    if (invoice.status !== "open" && invoice.status !== "uncollectible") continue;
    ctx.emit("invoice.overdue", invoice);
    overdue.push(invoice);
  }
  return overdue;
}

// ---------------------------------------------------------------- invoice items

/**
 * POST /v1/invoiceitems (Stripe API reference, "Create an invoice item"): a pending charge added to
 * the customer's next invoice — with `subscription`, the next invoice of that subscription — as a line
 * of its own, with its own `period` and `metadata`. The fake takes `amount`, or `quantity` with
 * `unit_amount_decimal` (the amount is then quantity × unit rounded once to whole cents).
 */
export function createInvoiceItem(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["customer", "amount", "currency", "description", "metadata", "period", "quantity", "unit_amount_decimal", "subscription", "discountable"]);
  const customer = mustGet(ctx.store, "customers", params.requiredString("customer"), "customer");
  if (customer.deleted) throw invalidParam("customer", `No such customer: '${customer.id}'`, "resource_missing");
  const amountParam = params.integer("amount");
  const quantity = params.integer("quantity", { min: 0 });
  const unit = params.decimal("unit_amount_decimal");
  if (amountParam !== undefined && (unit !== undefined || quantity !== undefined)) throw invalidParam("amount", "You may only specify one of amount or (quantity and unit_amount_decimal).");
  if (amountParam === undefined && unit === undefined) throw invalidParam("amount", "Missing required param: amount (or unit_amount_decimal).", "parameter_missing");
  const qty = quantity ?? 1;
  const amount = amountParam ?? lineAmountCents(String(qty), unit as string);
  const currency = (params.string("currency") ?? (amountParam !== undefined ? undefined : "usd"))?.toLowerCase();
  if (!currency) throw invalidParam("currency", "Missing required param: currency.", "parameter_missing");
  const subId = params.string("subscription");
  const sub = subId ? mustGet(ctx.store, "subscriptions", subId, "subscription") : null;
  if (sub && sub.status === "canceled") throw invalidParam("subscription", `The subscription ${sub.id} is canceled; invoice items cannot be added to it.`);
  const periodParams = params.object("period");
  periodParams?.allowOnly(["start", "end"]);
  const start = periodParams ? (periodParams.integer("start", { required: true, min: 0 }) as number) : ctx.now;
  const end = periodParams ? (periodParams.integer("end", { required: true, min: 0 }) as number) : ctx.now;
  if (end < start) throw invalidParam("period[end]", "period[end] must be on or after period[start].");
  params.boolean("discountable");
  const item: StripeObject = {
    id: newId("ii", 24),
    object: "invoiceitem",
    amount,
    currency,
    customer: customer.id,
    date: ctx.now,
    description: params.nullableString("description", 500) ?? null,
    discountable: true,
    discounts: [],
    invoice: null,
    livemode: false,
    metadata: applyMetadata({}, params.metadata()),
    net_amount: amount,
    parent: sub ? { subscription_details: { subscription: sub.id, subscription_item: null }, type: "subscription_details" } : null,
    period: { end, start },
    pricing: unit !== undefined ? { price_details: null, type: null, unit_amount_decimal: unit } : null,
    proration: false,
    quantity: qty,
    tax_rates: [],
    test_clock: null,
  };
  ctx.store.insert("invoiceitems", item);
  ctx.emit("invoiceitem.created", item);
  return { body: item };
}

export function retrieveInvoiceItem(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  return { body: mustGet(ctx.store, "invoiceitems", id) };
}

export function listInvoiceItems(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["limit", "starting_after", "ending_before", "customer", "invoice", "pending", "created"]);
  const matches = fieldsEqual({ customer: params.string("customer"), invoice: params.string("invoice") });
  const pending = params.boolean("pending");
  const created = createdFilter(params);
  const items = ctx.store.newestFirst("invoiceitems").filter((ii) => matches(ii) && (pending === undefined || (ii.invoice === null) === pending) && created({ ...ii, created: ii.date }));
  return { body: paginate(items, params, "/v1/invoiceitems", "invoiceitem") };
}

/** The invoice line an invoice item becomes (parent type invoice_item_details), keeping its period and metadata. */
function invoiceItemLine(item: StripeObject, invoiceId: string): StripeObject {
  const unit = (item.pricing as { unit_amount_decimal: string } | null)?.unit_amount_decimal ?? null;
  const sub = (item.parent as { subscription_details: { subscription: string } } | null)?.subscription_details?.subscription ?? null;
  return invoiceLine(invoiceId, {
    amount: item.amount as number,
    currency: item.currency,
    description: item.description,
    discountable: item.discountable,
    metadata: clone(item.metadata),
    parent: {
      invoice_item_details: { invoice_item: item.id, proration: false, proration_details: { credited_items: null }, subscription: sub },
      subscription_item_details: null,
      type: "invoice_item_details",
    },
    period: clone(item.period),
    pricing: { price_details: null, type: null, unit_amount_decimal: unit },
    quantity: item.quantity,
    quantity_decimal: String(item.quantity),
    subscription: sub,
  });
}

/**
 * An invoice line (Stripe's `line_item`): the caller gives what sets this line apart; the rest —
 * no discounts, no taxes, the subtotal equal to the amount — is the same for every line the fake writes.
 */
export function invoiceLine(
  invoiceId: string,
  line: { amount: number; currency: unknown; description: unknown; discountable?: unknown; metadata?: unknown; parent: unknown; period: unknown; pricing: unknown; quantity: unknown; quantity_decimal: string; subscription?: unknown },
): StripeObject {
  return {
    id: newId("il", 24),
    object: "line_item",
    amount: line.amount,
    currency: line.currency,
    description: line.description,
    discount_amounts: [],
    discountable: line.discountable ?? true,
    discounts: [],
    invoice: invoiceId,
    livemode: false,
    metadata: line.metadata ?? {},
    parent: line.parent,
    period: line.period,
    pretax_credit_amounts: [],
    pricing: line.pricing,
    quantity: line.quantity,
    quantity_decimal: line.quantity_decimal,
    // Lines of a checkout's invoice carry no subscription key at all.
    ...("subscription" in line ? { subscription: line.subscription } : {}),
    subtotal: line.amount,
    taxes: [],
  };
}
