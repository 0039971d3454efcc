/**
 * The renewal invoice's draft window. Stripe's subscription invoice lifecycle: at a period's end the
 * subscription creates a draft invoice (invoice.created) and finalises it about one hour later
 * (invoice.finalized, then the automatic charge); the draft carries `automatically_finalizes_at`. The
 * fake keeps the hour by default (`draftWindowSeconds` 3600) and tests compress it, as they compress
 * the webhook retry schedule. The fake's clock is Stripe's (unix seconds, running with the wall clock).
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import Stripe from "stripe";
import type { StripeFake } from "@/lib/fakes/stripe";
import { startFake } from "./helpers";

let fake: StripeFake;
let stripe: Stripe;
let hourly: StripeFake;
let hourlyStripe: Stripe;
const WINDOW_S = 2;

async function meteredSubscription(f: StripeFake, s: Stripe, email: string): Promise<{ customer: Stripe.Customer; sub: Stripe.Subscription }> {
  const meter = (await s.billing.meters.list({ status: "active" })).data.find((m) => m.event_name === "kd_draft_ms") ??
    (await s.billing.meters.create({ display_name: "Draft test (ms)", event_name: "kd_draft_ms", default_aggregation: { formula: "sum" }, customer_mapping: { type: "by_id", event_payload_key: "stripe_customer_id" }, value_settings: { event_payload_key: "value" } }));
  const product = await s.products.create({ name: "Overage compute" });
  // 0.0025 ¢ per millisecond (1.5 USD per compute minute).
  const price = await s.prices.create({ product: product.id, currency: "usd", unit_amount_decimal: Stripe.Decimal.from("0.0025"), recurring: { interval: "month", usage_type: "metered", meter: meter.id } });
  const customer = await s.customers.create({ email });
  const sub = await s.subscriptions.create({ customer: customer.id, items: [{ price: price.id }] });
  await s.billing.meterEvents.create({ event_name: "kd_draft_ms", timestamp: f.now(), payload: { stripe_customer_id: customer.id, value: "4000" } });
  return { customer, sub };
}

async function eventTypes(s: Stripe, invoiceId: string): Promise<string[]> {
  const types: string[] = [];
  for await (const e of s.events.list({ limit: 100 })) if ((e.data.object as { id?: string }).id === invoiceId && e.type.startsWith("invoice.")) types.push(e.type);
  return types.reverse();
}

beforeAll(async () => {
  ({ fake, stripe } = await startFake({ draftWindowSeconds: WINDOW_S }));
  ({ fake: hourly, stripe: hourlyStripe } = await startFake());
});
afterAll(async () => {
  await fake.close();
  await hourly.close();
});

describe("the draft window before a renewal invoice is finalised", () => {
  it("is one hour by default: the period's invoice stays a draft until its end plus 3600 s, then is finalised and charged", async () => {
    const { customer, sub } = await meteredSubscription(hourly, hourlyStripe, "hour@cinder-quay.test");
    hourly.setDefaultCard(customer.id, "4242424242424242");
    const end = sub.items.data[0].current_period_end;
    // Well inside the hour (the fake's clock keeps running while the test looks).
    hourly.advanceClock(end + 3000);
    const [draft] = (await hourlyStripe.invoices.list({ subscription: sub.id })).data;
    // 4,000 ms × 0.0025 ¢ = 10 ¢ (arithmetic).
    expect(draft).toMatchObject({ status: "draft", total: 10, period_end: end, auto_advance: true, automatically_finalizes_at: end + 3600, number: null, hosted_invoice_url: null });
    expect(await eventTypes(hourlyStripe, draft.id!)).toEqual(["invoice.created"]);

    hourly.advanceClock(end + 3600);
    const finalised = await hourlyStripe.invoices.retrieve(draft.id!);
    expect(finalised).toMatchObject({ status: "paid", automatically_finalizes_at: null, status_transitions: { finalized_at: end + 3600, paid_at: end + 3600 } });
    expect(await eventTypes(hourlyStripe, draft.id!)).toEqual(["invoice.created", "invoice.finalized", "invoice.paid", "invoice.payment_succeeded"]);
  });

  it("a clock advance far past the end crosses the draft window in time order: each period's draft is finalised before the next period closes", async () => {
    const { sub } = await meteredSubscription(hourly, hourlyStripe, "months@cinder-quay.test");
    const end = sub.items.data[0].current_period_end;
    hourly.advanceClock(end + 40 * 86_400);
    // Oldest first; every subscription on this fake crossed its boundaries, this one's are listed here.
    const [first, ...later] = (await hourlyStripe.invoices.list({ subscription: sub.id, limit: 100 })).data.reverse();
    expect(later.length).toBeGreaterThanOrEqual(1);
    // The usage period's invoice is open (no card on file); the empty later periods are $0, paid at finalisation.
    expect(first).toMatchObject({ status: "open", total: 10 });
    for (const invoice of later) expect(invoice).toMatchObject({ status: "paid", total: 0 });
    for (const invoice of [first, ...later]) expect(invoice.status_transitions.finalized_at).toBe(invoice.period_end + 3600);
  });

  it("compressed for tests, a draft is finalised by itself once the window passes on the running clock (no clock advance)", async () => {
    const { sub } = await meteredSubscription(fake, stripe, "short@cinder-quay.test");
    const end = sub.items.data[0].current_period_end;
    fake.advanceClock(end);
    const [draft] = (await stripe.invoices.list({ subscription: sub.id })).data;
    expect(draft).toMatchObject({ status: "draft", automatically_finalizes_at: end + WINDOW_S });
    // Poll with a deadline: the fake's clock runs with the wall clock, so the window ends by itself.
    const deadline = Date.now() + 30_000;
    let invoice = await stripe.invoices.retrieve(draft.id!);
    while (invoice.status === "draft" && Date.now() < deadline) {
      await new Promise((resolve) => setTimeout(resolve, 50));
      invoice = await stripe.invoices.retrieve(draft.id!);
    }
    expect(invoice.status).toBe("open");
    expect(invoice.status_transitions.finalized_at).toBeGreaterThanOrEqual(end + WINDOW_S);
    expect(invoice.number).not.toBeNull();
    expect(await eventTypes(stripe, draft.id!)).toEqual(["invoice.created", "invoice.finalized"]);
  });

  it("finalising a draft by hand within the window is allowed, and the window then does nothing more", async () => {
    const { sub } = await meteredSubscription(hourly, hourlyStripe, "early@cinder-quay.test");
    const end = sub.items.data[0].current_period_end;
    hourly.advanceClock(end + 10);
    const [draft] = (await hourlyStripe.invoices.list({ subscription: sub.id })).data;
    expect(draft.status).toBe("draft");
    const finalised = await hourlyStripe.invoices.finalizeInvoice(draft.id!);
    expect(finalised).toMatchObject({ status: "open", automatically_finalizes_at: null });
    hourly.advanceClock(end + 7200);
    expect(await eventTypes(hourlyStripe, draft.id!)).toEqual(["invoice.created", "invoice.finalized"]);
  });

  it("refuses a negative or fractional window, naming the option", async () => {
    await expect(startFake({ draftWindowSeconds: -1 })).rejects.toThrow(/draftWindowSeconds/);
    await expect(startFake({ draftWindowSeconds: 0.5 })).rejects.toThrow(/draftWindowSeconds/);
  });
});
