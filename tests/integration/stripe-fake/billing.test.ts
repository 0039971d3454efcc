import { afterAll, beforeAll, describe, expect, it } from "vitest";
import Stripe from "stripe";
import type { StripeFake } from "@/lib/fakes/stripe";
import { expectStripeError, startFake } from "./helpers";

let fake: StripeFake;
let stripe: Stripe;
let meter: Stripe.Billing.Meter;
let overagePrice: Stripe.Price;

/** A minute-aligned instant a little in the fake past, so event windows are easy to reason about. */
function alignedMinute(offsetMinutes: number): number {
  return Math.floor(fake.now() / 60) * 60 + offsetMinutes * 60;
}

beforeAll(async () => {
  ({ fake, stripe } = await startFake());
  meter = await stripe.billing.meters.create({
    display_name: "Overage compute (ms)",
    event_name: "kd_compute_ms",
    default_aggregation: { formula: "sum" },
    customer_mapping: { type: "by_id", event_payload_key: "stripe_customer_id" },
    value_settings: { event_payload_key: "value" },
  });
  const product = await stripe.products.create({ name: "Overage compute" });
  // 0.0025 ¢ per millisecond = 1.5 USD per compute minute (60,000 ms × 0.0025 ¢ = 150 ¢).
  overagePrice = await stripe.prices.create({ product: product.id, currency: "usd", unit_amount_decimal: Stripe.Decimal.from("0.0025"), recurring: { interval: "month", usage_type: "metered", meter: meter.id } });
});
afterAll(async () => {
  await fake.close();
});

describe("billing meters", () => {
  it("creates, retrieves and lists meters with Stripe's shape", async () => {
    expect(meter.id).toMatch(/^mtr_/);
    expect(meter).toMatchObject({
      object: "billing.meter",
      status: "active",
      event_name: "kd_compute_ms",
      default_aggregation: { formula: "sum" },
      customer_mapping: { type: "by_id", event_payload_key: "stripe_customer_id" },
      value_settings: { event_payload_key: "value" },
      event_time_window: null,
    });
    expect(await stripe.billing.meters.retrieve(meter.id)).toEqual(JSON.parse(JSON.stringify(meter)));
    const list = await stripe.billing.meters.list({ status: "active" });
    expect(list.data.map((m) => m.id)).toContain(meter.id);
    const dup = await expectStripeError(stripe.billing.meters.create({ display_name: "again", event_name: "kd_compute_ms", default_aggregation: { formula: "sum" } }));
    expect(dup.param).toBe("event_name");
  });

  it("sums meter events, rejects a repeated identifier and reports event summaries", async () => {
    const studio = await stripe.customers.create({ email: "ops@lantern-works.test" });
    const t0 = alignedMinute(-120); // two hours back, on a minute boundary
    const sent = await stripe.billing.meterEvents.create({ event_name: "kd_compute_ms", identifier: "sweep_41:chunk_0", timestamp: t0 + 10, payload: { stripe_customer_id: studio.id, value: "1200" } });
    expect(sent).toMatchObject({ object: "billing.meter_event", identifier: "sweep_41:chunk_0", event_name: "kd_compute_ms", timestamp: t0 + 10, payload: { value: "1200" } });
    await stripe.billing.meterEvents.create({ event_name: "kd_compute_ms", identifier: "sweep_41:chunk_1", timestamp: t0 + 30, payload: { stripe_customer_id: studio.id, value: "800" } });
    await stripe.billing.meterEvents.create({ event_name: "kd_compute_ms", identifier: "sweep_41:chunk_2", timestamp: t0 + 3600 + 5, payload: { stripe_customer_id: studio.id, value: "500" } });

    const dup = await expectStripeError(
      stripe.billing.meterEvents.create({ event_name: "kd_compute_ms", identifier: "sweep_41:chunk_0", timestamp: t0 + 10, payload: { stripe_customer_id: studio.id, value: "1200" } }),
    );
    expect(dup.statusCode).toBe(400);
    expect(dup.code).toBe("resource_already_exists");
    expect(dup.param).toBe("identifier");

    const whole = await stripe.billing.meters.listEventSummaries(meter.id, { customer: studio.id, start_time: t0, end_time: t0 + 2 * 3600 });
    expect(whole.data).toHaveLength(1);
    // 1,200 + 800 + 500 = 2,500 ms; the duplicate is not counted (arithmetic).
    expect(whole.data[0]).toMatchObject({ object: "billing.meter_event_summary", aggregated_value: 2500, meter: meter.id, start_time: t0, end_time: t0 + 7200 });

    const hourStart = Math.floor(t0 / 3600) * 3600;
    const hourly = await stripe.billing.meters.listEventSummaries(meter.id, { customer: studio.id, start_time: hourStart, end_time: hourStart + 3 * 3600, value_grouping_window: "hour" });
    const byStart = Object.fromEntries(hourly.data.map((s) => [s.start_time, s.aggregated_value]));
    const bucket = (t: number) => Math.floor(t / 3600) * 3600;
    const expected: Record<number, number> = { [hourStart]: 0, [hourStart + 3600]: 0, [hourStart + 7200]: 0 };
    expected[bucket(t0 + 10)] += 1200;
    expected[bucket(t0 + 30)] += 800;
    expected[bucket(t0 + 3605)] += 500;
    expect(byStart).toEqual(expected);
    // Newest window first, like the fake's other lists.
    expect(hourly.data.map((s) => s.start_time)).toEqual([hourStart + 7200, hourStart + 3600, hourStart]);

    const unaligned = await expectStripeError(stripe.billing.meters.listEventSummaries(meter.id, { customer: studio.id, start_time: t0 + 1, end_time: t0 + 60 }));
    expect(unaligned.param).toBe("start_time");
  });

  it("rejects meter events that cannot be attributed, naming the payload field", async () => {
    const noCustomer = await expectStripeError(stripe.billing.meterEvents.create({ event_name: "kd_compute_ms", payload: { value: "5" } }));
    expect(noCustomer.param).toBe("payload[stripe_customer_id]");
    const studio = await stripe.customers.create({});
    const badValue = await expectStripeError(stripe.billing.meterEvents.create({ event_name: "kd_compute_ms", payload: { stripe_customer_id: studio.id, value: "12ms" } }));
    expect(badValue.param).toBe("payload[value]");
    const noMeter = await expectStripeError(stripe.billing.meterEvents.create({ event_name: "kd_unknown_meter", payload: { stripe_customer_id: studio.id, value: "5" } }));
    expect(noMeter.param).toBe("event_name");
    const tooOld = await expectStripeError(stripe.billing.meterEvents.create({ event_name: "kd_compute_ms", timestamp: fake.now() - 36 * 86400, payload: { stripe_customer_id: studio.id, value: "5" } }));
    expect(tooOld.param).toBe("timestamp");
  });
});

describe("metered subscriptions and invoices", () => {
  async function subscribedStudio(email: string) {
    const studio = await stripe.customers.create({ email });
    const sub = await stripe.subscriptions.create({ customer: studio.id, items: [{ price: overagePrice.id }], metadata: { studio_id: email } });
    return { studio, sub };
  }

  it("creates an active subscription whose item carries the billing period", async () => {
    const { studio, sub } = await subscribedStudio("lead@ember-hollow.test");
    expect(sub.id).toMatch(/^sub_/);
    expect(sub).toMatchObject({ object: "subscription", status: "active", customer: studio.id, collection_method: "charge_automatically", currency: "usd" });
    const item = sub.items.data[0];
    expect(item.id).toMatch(/^si_/);
    expect(item.price.id).toBe(overagePrice.id);
    expect(item.current_period_start).toBe(sub.start_date);
    const start = new Date(item.current_period_start * 1000);
    const end = new Date(item.current_period_end * 1000);
    // One calendar month later in UTC (same day of month unless clamped).
    expect((end.getUTCFullYear() - start.getUTCFullYear()) * 12 + end.getUTCMonth() - start.getUTCMonth()).toBe(1);

    expect((await stripe.subscriptions.retrieve(sub.id)).id).toBe(sub.id);
    expect((await stripe.subscriptions.list({ customer: studio.id })).data.map((s) => s.id)).toEqual([sub.id]);
    const licensed = await expectStripeError(stripe.subscriptions.create({ customer: studio.id, items: [{ price: overagePrice.id, quantity: 2 }] }));
    expect(licensed.param).toBe("items[0][quantity]");
  });

  it("closes a period into an invoice: meter total × unit price in integer cents, finalized, with events", async () => {
    const { studio, sub } = await subscribedStudio("money@ember-hollow.test");
    const periodStart = sub.items.data[0].current_period_start;
    for (const [i, ms] of [61_000, 59_000, 123].entries()) {
      await stripe.billing.meterEvents.create({ event_name: "kd_compute_ms", identifier: `ember:${i}`, timestamp: periodStart + i, payload: { stripe_customer_id: studio.id, value: String(ms) } });
    }
    fake.advanceClock(fake.now() + 10);
    const [invoice] = fake.closePeriod({ customer: studio.id });
    // 61,000 + 59,000 + 123 = 120,123 ms × 0.0025 ¢ = 300.3075 ¢ → 300 ¢ (arithmetic; nearest-cent rounding, from memory).
    const fetched = await stripe.invoices.retrieve(invoice.id);
    expect(fetched).toMatchObject({ object: "invoice", status: "open", customer: studio.id, currency: "usd", subtotal: 300, total: 300, amount_due: 300, amount_paid: 0, amount_remaining: 300, billing_reason: "subscription_cycle", period_start: periodStart });
    expect(fetched.parent?.subscription_details?.subscription).toBe(sub.id);
    expect(fetched.number).toMatch(/^[0-9A-F]{8}-0001$/);
    expect(Number.isInteger(fetched.total)).toBe(true);

    const lines = await stripe.invoices.listLineItems(invoice.id);
    expect(lines.data).toHaveLength(1);
    expect(lines.data[0].id).toMatch(/^il_/);
    expect(lines.data[0]).toMatchObject({ object: "line_item", amount: 300, quantity: 120123, period: { start: periodStart, end: fetched.period_end } });
    expect(lines.data[0].pricing?.price_details?.price).toBe(overagePrice.id);
    expect(lines.data[0].parent?.subscription_item_details?.subscription_item).toBe(sub.items.data[0].id);

    const types = (await stripe.events.list({ limit: 100 })).data.filter((e) => (e.data.object as { id?: string }).id === invoice.id).map((e) => e.type);
    expect(types).toContain("invoice.created");
    expect(types).toContain("invoice.finalized");

    // The next period starts where this one ended, and its usage is counted separately.
    const rolled = await stripe.subscriptions.retrieve(sub.id);
    expect(rolled.items.data[0].current_period_start).toBe(fetched.period_end);
    expect(rolled.latest_invoice).toBe(invoice.id);

    const byCustomer = await stripe.invoices.list({ customer: studio.id });
    expect(byCustomer.data.map((i) => i.id)).toEqual([invoice.id]);
    const bySub = await stripe.invoices.list({ subscription: sub.id, status: "open" });
    expect(bySub.data.map((i) => i.id)).toEqual([invoice.id]);
    expect((await stripe.invoices.list({ subscription: sub.id, status: "paid" })).data).toHaveLength(0);

    const paid = await stripe.invoices.pay(invoice.id, { paid_out_of_band: true });
    expect(paid).toMatchObject({ status: "paid", amount_paid: 300, amount_remaining: 0 });
    const paidAgain = await expectStripeError(stripe.invoices.pay(invoice.id));
    expect(paidAgain.statusCode).toBe(400);
  });

  it("leaves drafts for finalizeInvoice, then charges the card on file and declines a bad one with 402", async () => {
    const { studio } = await subscribedStudio("draft@ember-hollow.test");
    const start = (await stripe.subscriptions.list({ customer: studio.id })).data[0].items.data[0].current_period_start;
    await stripe.billing.meterEvents.create({ event_name: "kd_compute_ms", timestamp: start, payload: { stripe_customer_id: studio.id, value: "60000" } });
    fake.advanceClock(fake.now() + 5);
    const [draft] = fake.closePeriod({ customer: studio.id, finalize: false });
    expect((await stripe.invoices.retrieve(draft.id)).status).toBe("draft");
    expect((await stripe.invoices.list({ customer: studio.id, status: "draft" })).data.map((i) => i.id)).toEqual([draft.id]);

    const finalized = await stripe.invoices.finalizeInvoice(draft.id);
    // 60,000 ms × 0.0025 ¢ = 150 ¢ (arithmetic).
    expect(finalized).toMatchObject({ status: "open", amount_due: 150 });
    const again = await expectStripeError(stripe.invoices.finalizeInvoice(draft.id));
    expect(again.statusCode).toBe(400);

    const noCard = await expectStripeError(stripe.invoices.pay(draft.id));
    expect(noCard.statusCode).toBe(400);

    await stripe.customers.update(studio.id, { invoice_settings: { default_payment_method: "pm_card_chargeDeclined" } });
    const declined = await expectStripeError(stripe.invoices.pay(draft.id));
    expect(declined).toBeInstanceOf(Stripe.errors.StripeCardError);
    expect(declined.statusCode).toBe(402);
    expect(declined.code).toBe("card_declined");
    expect(declined.decline_code).toBe("generic_decline");
    expect((await stripe.invoices.retrieve(draft.id)).status).toBe("open");

    await stripe.customers.update(studio.id, { invoice_settings: { default_payment_method: "pm_card_visa" } });
    const paid = await stripe.invoices.pay(draft.id);
    expect(paid).toMatchObject({ status: "paid", amount_paid: 150, attempt_count: 2 });
    const paidEvents = (await stripe.events.list({ type: "invoice.paid" })).data.filter((e) => (e.data.object as Stripe.Invoice).id === draft.id);
    expect(paidEvents).toHaveLength(1);
  });

  it("auto-charges at period close when a test card is on file", async () => {
    const { studio } = await subscribedStudio("auto@ember-hollow.test");
    fake.setDefaultCard(studio.id, "4242 4242 4242 4242");
    const start = (await stripe.subscriptions.list({ customer: studio.id })).data[0].items.data[0].current_period_start;
    await stripe.billing.meterEvents.create({ event_name: "kd_compute_ms", timestamp: start, payload: { stripe_customer_id: studio.id, value: "400000" } });
    fake.advanceClock(fake.now() + 5);
    const [invoice] = fake.closePeriod({ customer: studio.id });
    // 400,000 ms × 0.0025 ¢ = 1,000 ¢ (arithmetic).
    expect(await stripe.invoices.retrieve(invoice.id)).toMatchObject({ status: "paid", amount_paid: 1000 });
  });

  it("a period with no usage gives a zero invoice that is paid on finalization", async () => {
    const { studio } = await subscribedStudio("idle@ember-hollow.test");
    fake.advanceClock(fake.now() + 5);
    const [invoice] = fake.closePeriod({ customer: studio.id });
    expect(await stripe.invoices.retrieve(invoice.id)).toMatchObject({ status: "paid", total: 0, amount_paid: 0 });
  });

  it("crosses period boundaries when the clock is advanced, like a test clock", async () => {
    const { studio, sub } = await subscribedStudio("clock@ember-hollow.test");
    const firstEnd = sub.items.data[0].current_period_end;
    await stripe.billing.meterEvents.create({ event_name: "kd_compute_ms", timestamp: fake.now(), payload: { stripe_customer_id: studio.id, value: "2000" } });
    const result = await fetch(`${fake.url}/_fake/advance_clock`, { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify({ to: firstEnd + 60 }) });
    expect(result.status).toBe(200);
    const invoices = await stripe.invoices.list({ subscription: sub.id });
    expect(invoices.data).toHaveLength(1);
    // 2,000 ms × 0.0025 ¢ = 5 ¢ (arithmetic).
    expect(invoices.data[0]).toMatchObject({ total: 5, period_end: firstEnd });
    const after = await stripe.subscriptions.retrieve(sub.id);
    expect(after.items.data[0].current_period_start).toBe(firstEnd);
  });

  it("cancels a subscription, invoicing the usage so far with invoice_now", async () => {
    const { studio, sub } = await subscribedStudio("bye@ember-hollow.test");
    await stripe.billing.meterEvents.create({ event_name: "kd_compute_ms", timestamp: fake.now(), payload: { stripe_customer_id: studio.id, value: "4000" } });
    fake.advanceClock(fake.now() + 5);
    const canceled = await stripe.subscriptions.cancel(sub.id, { invoice_now: true });
    expect(canceled).toMatchObject({ status: "canceled", cancellation_details: { reason: "cancellation_requested" } });
    expect(Math.abs((canceled.canceled_at as number) - fake.now())).toBeLessThanOrEqual(1);
    const invoices = await stripe.invoices.list({ subscription: sub.id });
    // 4,000 ms × 0.0025 ¢ = 10 ¢ (arithmetic).
    expect(invoices.data.map((i) => i.total)).toEqual([10]);
    expect((await stripe.subscriptions.list({ customer: studio.id })).data).toHaveLength(0);
    expect((await stripe.subscriptions.list({ customer: studio.id, status: "canceled" })).data.map((s) => s.id)).toEqual([sub.id]);
    const twice = await expectStripeError(stripe.subscriptions.cancel(sub.id));
    expect(twice.statusCode).toBe(400);
    const deleted = await stripe.events.list({ type: "customer.subscription.deleted", limit: 1 });
    expect((deleted.data[0].data.object as Stripe.Subscription).id).toBe(sub.id);
  });

  it("ends a subscription set to cancel at period end when the period closes", async () => {
    const { studio, sub } = await subscribedStudio("last@ember-hollow.test");
    const updated = await stripe.subscriptions.update(sub.id, { cancel_at_period_end: true });
    expect(updated.cancel_at).toBe(sub.items.data[0].current_period_end);
    fake.advanceClock(sub.items.data[0].current_period_end + 1);
    const after = await stripe.subscriptions.retrieve(sub.id);
    expect(after.status).toBe("canceled");
    expect((await stripe.invoices.list({ customer: studio.id })).data).toHaveLength(1);
  });
});

describe("deleting a customer", () => {
  it("cancels its subscriptions", async () => {
    const studio = await stripe.customers.create({ email: "closing@ember-hollow.test" });
    const sub = await stripe.subscriptions.create({ customer: studio.id, items: [{ price: overagePrice.id }] });
    await stripe.customers.del(studio.id);
    expect((await stripe.subscriptions.retrieve(sub.id)).status).toBe("canceled");
  });
});

describe("control endpoints reject bad input naming the field", () => {
  it("advance_clock needs a forward `to`, outage needs `down`, deliver needs `events`", async () => {
    const post = (path: string, body: unknown) => fetch(`${fake.url}${path}`, { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });
    const noTo = await post("/_fake/advance_clock", {});
    expect(noTo.status).toBe(400);
    expect(((await noTo.json()) as { error: { param: string } }).error.param).toBe("to");
    const backwards = await post("/_fake/advance_clock", { to: fake.now() - 100 });
    expect(backwards.status).toBe(400);
    const outage = await post("/_fake/outage", {});
    expect(((await outage.json()) as { error: { param: string } }).error.param).toBe("down");
    const deliver = await post("/_fake/deliver", { events: "evt_1" });
    expect(((await deliver.json()) as { error: { param: string } }).error.param).toBe("events");
    const unknown = await post("/_fake/nothing_here", {});
    expect(unknown.status).toBe(404);
  });
});
