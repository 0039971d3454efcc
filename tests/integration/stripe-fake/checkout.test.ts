import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type Stripe from "stripe";
import type { StripeFake } from "@/lib/fakes/stripe";
import { expectStripeError, startFake } from "./helpers";

let fake: StripeFake;
let stripe: Stripe;
let packPrice: Stripe.Price;
let customer: Stripe.Customer;

const SUCCESS_URL = "http://127.0.0.1:3999/studios/std_pebble/billing/success?session_id={CHECKOUT_SESSION_ID}";
const CANCEL_URL = "http://127.0.0.1:3999/studios/std_pebble/billing";

beforeAll(async () => {
  ({ fake, stripe } = await startFake());
  const product = await stripe.products.create({ name: "Compute minutes — 600 pack" });
  packPrice = await stripe.prices.create({ product: product.id, currency: "usd", unit_amount: 4900 });
  customer = await stripe.customers.create({ email: "finance@pebble-forge.test", metadata: { studio_id: "std_pebble" } });
});
afterAll(async () => {
  await fake.close();
});

async function newSession(extra: Partial<Stripe.Checkout.SessionCreateParams> = {}): Promise<Stripe.Checkout.Session> {
  return stripe.checkout.sessions.create({
    mode: "payment",
    customer: customer.id,
    client_reference_id: "std_pebble",
    metadata: { studio_id: "std_pebble", pack: "600" },
    line_items: [{ price: packPrice.id, quantity: 2 }],
    success_url: SUCCESS_URL,
    cancel_url: CANCEL_URL,
    ...extra,
  });
}

function payForm(card: string, email = "finance@pebble-forge.test"): RequestInit {
  return {
    method: "POST",
    headers: { "content-type": "application/x-www-form-urlencoded" },
    body: new URLSearchParams({ email, card_number: card, card_expiry: "12 / 34", card_cvc: "123" }).toString(),
    redirect: "manual",
  };
}

describe("Checkout Sessions (payment mode)", () => {
  it("creates an open session with totals in integer cents and a hosted page url", async () => {
    const session = await newSession();
    expect(session.id).toMatch(/^cs_test_/);
    // 2 × 4,900 ¢ = 9,800 ¢ (arithmetic).
    expect(session).toMatchObject({
      object: "checkout.session",
      mode: "payment",
      status: "open",
      payment_status: "unpaid",
      amount_subtotal: 9800,
      amount_total: 9800,
      currency: "usd",
      customer: customer.id,
      client_reference_id: "std_pebble",
      metadata: { studio_id: "std_pebble", pack: "600" },
      payment_intent: null,
      livemode: false,
    });
    expect(session.url).toBe(`${fake.url}/c/pay/${session.id}`);
    expect(session.expires_at - session.created).toBe(24 * 3600);

    const lines = await stripe.checkout.sessions.listLineItems(session.id);
    expect(lines.data).toHaveLength(1);
    expect(lines.data[0]).toMatchObject({ object: "item", quantity: 2, amount_total: 9800, description: "Compute minutes — 600 pack" });
    expect(lines.data[0].price?.id).toBe(packPrice.id);

    const expanded = await stripe.checkout.sessions.retrieve(session.id, { expand: ["line_items", "customer"] });
    expect(expanded.line_items?.data[0].amount_total).toBe(9800);
    expect((expanded.customer as Stripe.Customer).email).toBe("finance@pebble-forge.test");
  });

  it("takes inline price_data with product_data", async () => {
    const session = await stripe.checkout.sessions.create({
      mode: "payment",
      success_url: SUCCESS_URL,
      line_items: [{ quantity: 3, price_data: { currency: "usd", unit_amount: 1250, product_data: { name: "Compute minutes — 100 pack" } } }],
    });
    // 3 × 1,250 ¢ = 3,750 ¢ (arithmetic).
    expect(session.amount_total).toBe(3750);
    const lines = await stripe.checkout.sessions.listLineItems(session.id);
    expect(lines.data[0].price?.active).toBe(false);
  });

  it("pays through the hosted page with 4242 4242 4242 4242 and redirects to success_url", async () => {
    const session = await newSession();
    const page = await fetch(session.url as string);
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).toContain('name="card_number"');
    expect(html).toContain("98.00 USD");

    const res = await fetch(session.url as string, payForm("4242 4242 4242 4242"));
    expect(res.status).toBe(303);
    expect(res.headers.get("location")).toBe(SUCCESS_URL.replace("{CHECKOUT_SESSION_ID}", session.id));

    const paid = await stripe.checkout.sessions.retrieve(session.id, { expand: ["payment_intent"] });
    expect(paid.status).toBe("complete");
    expect(paid.payment_status).toBe("paid");
    expect(paid.url).toBeNull();
    const pi = paid.payment_intent as Stripe.PaymentIntent;
    expect(pi.id).toMatch(/^pi_/);
    expect(pi).toMatchObject({ status: "succeeded", amount: 9800, amount_received: 9800, currency: "usd", customer: customer.id });
    expect(paid.customer_details?.email).toBe("finance@pebble-forge.test");

    const events = await stripe.events.list({ type: "checkout.session.completed" });
    const completed = events.data.find((e) => (e.data.object as Stripe.Checkout.Session).id === session.id);
    expect(completed).toBeDefined();
    expect((completed?.data.object as Stripe.Checkout.Session).payment_status).toBe("paid");

    const again = await fetch(session.url as string, payForm("4242424242424242"));
    expect(again.status).toBe(409); // a complete session cannot be paid twice
  });

  it("declines 4000 0000 0000 0002 with card_declined on the page and takes no payment", async () => {
    const session = await newSession();
    const res = await fetch(session.url as string, payForm("4000 0000 0000 0002"));
    expect(res.status).toBe(402);
    const html = await res.text();
    expect(html).toContain("card_declined");
    expect(html).toContain("Your card was declined.");

    const after = await stripe.checkout.sessions.retrieve(session.id);
    expect(after.status).toBe("open");
    expect(after.payment_status).toBe("unpaid");
    expect(after.payment_intent).toBeNull();
    const completed = (await stripe.events.list({ type: "checkout.session.completed" })).data.filter((e) => (e.data.object as Stripe.Checkout.Session).id === session.id);
    expect(completed).toHaveLength(0);
    const failed = await stripe.events.list({ type: "payment_intent.payment_failed", limit: 1 });
    expect((failed.data[0].data.object as Stripe.PaymentIntent).last_payment_error?.decline_code).toBe("generic_decline");

    // A JSON client gets Stripe's card_error envelope with status 402.
    const json = await fetch(session.url as string, { ...payForm("4000000000000002"), headers: { "content-type": "application/x-www-form-urlencoded", accept: "application/json" } });
    expect(json.status).toBe(402);
    const body = (await json.json()) as { error: { type: string; code: string; decline_code: string } };
    expect(body.error).toMatchObject({ type: "card_error", code: "card_declined", decline_code: "generic_decline" });

    // The customer can retry on the same page with a good card.
    const retry = await fetch(session.url as string, payForm("4242424242424242"));
    expect(retry.status).toBe(303);
    expect((await stripe.checkout.sessions.retrieve(session.id)).payment_status).toBe("paid");
  });

  it("asks for a card number when the field is empty", async () => {
    const session = await newSession();
    const res = await fetch(session.url as string, payForm(""));
    expect(res.status).toBe(400);
    expect(await res.text()).toContain("card_number is required");
  });

  it("expires a session; an expired session's page is gone and it cannot be expired twice", async () => {
    const session = await newSession();
    const expired = await stripe.checkout.sessions.expire(session.id);
    expect(expired.status).toBe("expired");
    expect((await fetch(`${fake.url}/c/pay/${session.id}`)).status).toBe(410);
    const err = await expectStripeError(stripe.checkout.sessions.expire(session.id));
    expect(err.statusCode).toBe(400);
    const events = await stripe.events.list({ type: "checkout.session.expired", limit: 1 });
    expect((events.data[0].data.object as Stripe.Checkout.Session).id).toBe(session.id);
  });

  it("expires sessions past expires_at on the fake clock", async () => {
    const session = await newSession({ expires_at: fake.now() + 3600 });
    fake.advanceClock(fake.now() + 3601);
    const after = await stripe.checkout.sessions.retrieve(session.id);
    expect(after.status).toBe("expired");
  });

  it("lists sessions by customer and status, newest first", async () => {
    const a = await newSession();
    const b = await newSession();
    const list = await stripe.checkout.sessions.list({ customer: customer.id, status: "open", limit: 2 });
    expect(list.data.map((s) => s.id)).toEqual([b.id, a.id]);
  });

  it("rejects what payment mode cannot take, naming the field", async () => {
    const meter = await stripe.billing.meters.create({ display_name: "Checkout test meter", event_name: "kd_checkout_meter", default_aggregation: { formula: "sum" } });
    const recurring = await stripe.prices.create({ product: packPrice.product as string, currency: "usd", unit_amount: 1, recurring: { interval: "month", usage_type: "metered", meter: meter.id } });
    const err = await expectStripeError(newSession({ line_items: [{ price: recurring.id, quantity: 1 }] }));
    expect(err.param).toBe("line_items[0][price]");
    const missing = await expectStripeError(newSession({ success_url: undefined }));
    expect(missing.param).toBe("success_url");
    const badPrice = await expectStripeError(newSession({ line_items: [{ price: "price_missing", quantity: 1 }] }));
    expect(badPrice.statusCode).toBe(404);
    expect(badPrice.param).toBe("line_items[0][price]");
  });

  it("leaves no trace of a request that fails half-way", async () => {
    const productsBefore = (await stripe.products.list({ limit: 100 })).data.length;
    const eventsBefore = (await stripe.events.list({ limit: 100 })).data.length;
    const err = await expectStripeError(
      stripe.checkout.sessions.create({
        mode: "payment",
        success_url: SUCCESS_URL,
        line_items: [
          { quantity: 1, price_data: { currency: "usd", unit_amount: 100, product_data: { name: "Made then rolled back" } } },
          { quantity: 1, price: "price_missing_second" },
        ],
      }),
    );
    expect(err.param).toBe("line_items[1][price]");
    expect((await stripe.products.list({ limit: 100 })).data.length).toBe(productsBefore);
    expect((await stripe.events.list({ limit: 100 })).data.length).toBe(eventsBefore);
  });

  it("expands data.customer in lists", async () => {
    await newSession();
    const list = await stripe.checkout.sessions.list({ customer: customer.id, limit: 1, expand: ["data.customer"] });
    expect((list.data[0].customer as Stripe.Customer).email).toBe("finance@pebble-forge.test");
    const bad = await expectStripeError(stripe.checkout.sessions.list({ limit: 1, expand: ["data.no_such_field"] }));
    expect(bad.param).toBe("expand");
  });

  it("creates the customer from the page when customer_creation is always", async () => {
    const session = await stripe.checkout.sessions.create({ mode: "payment", customer_creation: "always", success_url: SUCCESS_URL, line_items: [{ price: packPrice.id, quantity: 1 }] });
    expect(session.customer).toBeNull();
    const res = await fetch(session.url as string, payForm("4242424242424242", "newcomer@saltmarsh-arcade.test"));
    expect(res.status).toBe(303);
    const paid = await stripe.checkout.sessions.retrieve(session.id, { expand: ["customer"] });
    expect((paid.customer as Stripe.Customer).email).toBe("newcomer@saltmarsh-arcade.test");
  });
});
