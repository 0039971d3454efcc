import { describe, expect, it } from "vitest";
import Stripe from "stripe";
import type { StripeFake } from "@/lib/fakes/stripe";
import { expectStripeError, startFakeForFile } from "./helpers";

let fake: StripeFake;
let stripe: Stripe;
startFakeForFile((started) => ({ fake, stripe } = started));

describe("the remaining endpoints through the SDK", () => {
  it("products: update and list by active", async () => {
    const a = await stripe.products.create({ name: "Pack of 100 minutes" });
    const b = await stripe.products.create({ name: "Pack of 1,000 minutes" });
    const renamed = await stripe.products.update(a.id, { name: "Pack of 120 minutes", active: false, metadata: { minutes: "120" } });
    expect(renamed).toMatchObject({ name: "Pack of 120 minutes", active: false, metadata: { minutes: "120" } });
    const active = await stripe.products.list({ active: true });
    expect(active.data.map((p) => p.id)).toEqual([b.id]);
    const custom = await stripe.products.create({ id: "kd_pack_5000", name: "Pack of 5,000 minutes" });
    expect(custom.id).toBe("kd_pack_5000");
    const again = await expectStripeError(stripe.products.create({ id: "kd_pack_5000", name: "dup" }));
    expect(again.code).toBe("resource_already_exists");
  });

  it("prices: update nickname and deactivate; an inactive price cannot be sold", async () => {
    const price = await stripe.prices.create({ currency: "usd", unit_amount: 990, product_data: { name: "Pack of 200 minutes" } });
    const updated = await stripe.prices.update(price.id, { nickname: "starter", active: false });
    expect(updated).toMatchObject({ nickname: "starter", active: false });
    const err = await expectStripeError(stripe.checkout.sessions.create({ mode: "payment", success_url: "http://127.0.0.1/ok", line_items: [{ price: price.id, quantity: 1 }] }));
    expect(err.param).toBe("line_items[0][price]");
    expect(err.message).toContain("inactive");
  });

  it("meters: rename, deactivate (events then rejected), reactivate", async () => {
    const meter = await stripe.billing.meters.create({ display_name: "Sweep ms", event_name: "kd_more_ms", default_aggregation: { formula: "count" } });
    expect((await stripe.billing.meters.update(meter.id, { display_name: "Sweep compute" })).display_name).toBe("Sweep compute");
    const off = await stripe.billing.meters.deactivate(meter.id);
    expect(off.status).toBe("inactive");
    expect(off.status_transitions.deactivated_at).not.toBeNull();
    const customer = await stripe.customers.create({});
    const rejected = await expectStripeError(stripe.billing.meterEvents.create({ event_name: "kd_more_ms", payload: { stripe_customer_id: customer.id } }));
    expect(rejected.param).toBe("event_name");
    const on = await stripe.billing.meters.reactivate(meter.id);
    expect(on.status).toBe("active");
    // count formula: the value key is optional, each event counts 1.
    await stripe.billing.meterEvents.create({ event_name: "kd_more_ms", payload: { stripe_customer_id: customer.id } });
    await stripe.billing.meterEvents.create({ event_name: "kd_more_ms", payload: { stripe_customer_id: customer.id } });
    const start = Math.floor((fake.now() - 600) / 60) * 60;
    const summary = await stripe.billing.meters.listEventSummaries(meter.id, { customer: customer.id, start_time: start, end_time: start + 1200 });
    // Two events under `count` (arithmetic).
    expect(summary.data[0].aggregated_value).toBe(2);
  });

  it("invoices: a manual draft, finalized and voided", async () => {
    const customer = await stripe.customers.create({ email: "manual@saltmarsh-arcade.test" });
    const draft = await stripe.invoices.create({ customer: customer.id, collection_method: "send_invoice", days_until_due: 14, metadata: { reason: "credit adjustment" } });
    expect(draft).toMatchObject({ object: "invoice", status: "draft", total: 0, billing_reason: "manual", collection_method: "send_invoice" });
    // A zero invoice is paid on finalization; void needs an open one, so it is refused here.
    const finalized = await stripe.invoices.finalizeInvoice(draft.id);
    expect(finalized.status).toBe("paid");
    const voidPaid = await expectStripeError(stripe.invoices.voidInvoice(draft.id));
    expect(voidPaid.statusCode).toBe(400);

    const meter = await stripe.billing.meters.create({ display_name: "void meter", event_name: "kd_void_ms", default_aggregation: { formula: "sum" } });
    const price = await stripe.prices.create({ currency: "usd", unit_amount: 2, product_data: { name: "void usage" }, recurring: { interval: "month", usage_type: "metered", meter: meter.id } });
    await stripe.subscriptions.create({ customer: customer.id, items: [{ price: price.id }] });
    await stripe.billing.meterEvents.create({ event_name: "kd_void_ms", payload: { stripe_customer_id: customer.id, value: "21" } });
    fake.advanceClock(fake.now() + 5);
    const [open] = fake.closePeriod({ customer: customer.id });
    // 21 units × 2 ¢ = 42 ¢ (arithmetic).
    expect(open.total).toBe(42);
    const voided = await stripe.invoices.voidInvoice(open.id);
    expect(voided).toMatchObject({ status: "void", amount_remaining: 0 });
  });

  it("webhook endpoints: retrieve without the secret; payment objects retrievable", async () => {
    const endpoint = await stripe.webhookEndpoints.create({ url: "http://127.0.0.1:9/hooks", enabled_events: ["invoice.paid"] });
    const fetched = await stripe.webhookEndpoints.retrieve(endpoint.id);
    expect(fetched.url).toBe("http://127.0.0.1:9/hooks");
    expect(fetched.secret).toBeUndefined();
    const badUrl = await expectStripeError(stripe.webhookEndpoints.create({ url: "not a url", enabled_events: ["*"] }));
    expect(badUrl.param).toBe("url");
    await stripe.webhookEndpoints.del(endpoint.id);

    const price = await stripe.prices.create({ currency: "usd", unit_amount: 4900, product_data: { name: "Pack of 600 minutes" } });
    const session = await stripe.checkout.sessions.create({ mode: "payment", success_url: "http://127.0.0.1/ok", line_items: [{ price: price.id, quantity: 1 }] });
    const res = await fetch(session.url as string, { method: "POST", body: new URLSearchParams({ card_number: "4242424242424242" }), redirect: "manual" });
    expect(res.status).toBe(303);
    const paid = await stripe.checkout.sessions.retrieve(session.id);
    const pi = await stripe.paymentIntents.retrieve(paid.payment_intent as string);
    expect(pi.status).toBe("succeeded");
    const pm = await stripe.paymentMethods.retrieve(pi.payment_method as string);
    expect(pm).toMatchObject({ object: "payment_method", type: "card", card: { last4: "4242", brand: "visa" } });
    expect((await fetch(`${fake.url}/c/pay/cs_test_unknown`)).status).toBe(404);
  });
});
