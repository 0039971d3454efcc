import { afterEach, describe, expect, it } from "vitest";
import Stripe from "stripe";
import { expectStripeError, sdkFor, startFake, startReceiver } from "./helpers";

const SECRET = "whsec_kickdrift_contract_secret_0001";
const verifier = new Stripe("sk_test_verifier_only_0001");

const cleanups: Array<() => Promise<void>> = [];
afterEach(async () => {
  while (cleanups.length) await (cleanups.pop() as () => Promise<void>)();
});

async function setup(respond?: (n: number, body: string) => number, retryDelaysMs = [50, 100, 200]) {
  const receiver = await startReceiver(respond);
  const { fake, stripe } = await startFake({ webhookUrl: receiver.url, webhookSecret: SECRET, webhookRetryDelaysMs: retryDelaysMs });
  cleanups.push(() => receiver.close(), () => fake.close());
  return { receiver, fake, stripe };
}

function parse(body: string): Stripe.Event {
  return JSON.parse(body) as Stripe.Event;
}

describe("signed webhooks", () => {
  it("signs every event so stripe.webhooks.constructEvent accepts it with the right secret only", async () => {
    const { receiver, fake, stripe } = await setup();
    expect(fake.webhookSecret).toBe(SECRET);
    const customer = await stripe.customers.create({ email: "hooks@moss-lantern.test", metadata: { studio_id: "std_moss" } });
    await receiver.waitFor(1);
    const [hit] = receiver.received;
    expect(hit.signature).toMatch(/^t=\d+,v1=[0-9a-f]{64}$/);

    const event = verifier.webhooks.constructEvent(hit.body, hit.signature, SECRET);
    expect(event.id).toMatch(/^evt_/);
    expect(event).toMatchObject({ object: "event", type: "customer.created", livemode: false, api_version: "2026-10-28.endive" });
    expect((event.data.object as Stripe.Customer).id).toBe(customer.id);
    expect(event.request?.id).toBe(customer.lastResponse.requestId);

    expect(() => verifier.webhooks.constructEvent(hit.body, hit.signature, "whsec_wrong_secret")).toThrow(Stripe.errors.StripeSignatureVerificationError);
    expect(() => verifier.webhooks.constructEvent(hit.body.replace("hooks@", "h00ks@"), hit.signature, SECRET)).toThrow(Stripe.errors.StripeSignatureVerificationError);

    const retrieved = await stripe.events.retrieve(event.id);
    expect(retrieved.id).toBe(event.id);
    expect(retrieved.pending_webhooks).toBe(0);
  });

  it("delivers in creation order", async () => {
    const { receiver, stripe } = await setup();
    const a = await stripe.customers.create({ email: "1@order.test" });
    const b = await stripe.customers.create({ email: "2@order.test" });
    const c = await stripe.customers.create({ email: "3@order.test" });
    await receiver.waitFor(3);
    expect(receiver.received.map((r) => (parse(r.body).data.object as Stripe.Customer).id)).toEqual([a.id, b.id, c.id]);
  });

  it("retries with back-off while the receiver answers 500, then stops once it answers 2xx", async () => {
    const { receiver, fake, stripe } = await setup((n) => (n <= 2 ? 500 : 200), [50, 150, 400]);
    await stripe.customers.create({ email: "flaky@order.test" });
    await receiver.waitFor(3);
    await fake.waitForWebhooks({ includeRetries: true });
    expect(receiver.received).toHaveLength(3);
    const ids = receiver.received.map((r) => parse(r.body).id);
    expect(new Set(ids).size).toBe(1); // the same event each time
    const gaps = [receiver.received[1].at - receiver.received[0].at, receiver.received[2].at - receiver.received[1].at];
    expect(gaps[0]).toBeGreaterThanOrEqual(45);
    expect(gaps[1]).toBeGreaterThanOrEqual(145);
    const [delivery] = fake.deliveries(ids[0]);
    expect(delivery.state).toBe("succeeded");
    expect(delivery.attempts.map((a) => a.status)).toEqual([500, 500, 200]);
    // Each attempt is signed afresh and verifies.
    for (const r of receiver.received) expect(verifier.webhooks.constructEvent(r.body, r.signature, SECRET).id).toBe(ids[0]);
  });

  it("gives up after the configured number of attempts", async () => {
    const { receiver, fake, stripe } = await setup(() => 503, [20, 20]);
    await stripe.customers.create({ email: "down@order.test" });
    await receiver.waitFor(3);
    await fake.waitForWebhooks({ includeRetries: true });
    const [delivery] = fake.deliveries();
    expect(delivery.state).toBe("failed");
    expect(delivery.attempts).toHaveLength(3);
    const failing = await stripe.events.list({ delivery_success: false });
    expect(failing.data.map((e) => e.id)).toContain(delivery.event);
  });

  it("retries when the receiver is down (connection refused) and delivers once it is back", async () => {
    const receiver = await startReceiver();
    const url = receiver.url;
    await receiver.close(); // nothing listens on this port now
    // Retries spread over ~13 s: a loaded machine still brings the receiver up before they run out.
    const { fake, stripe } = await startFake({ webhookUrl: url, webhookSecret: SECRET, webhookRetryDelaysMs: [100, 200, 400, 800, 1_600, 3_200, 6_400] });
    cleanups.push(() => fake.close());
    await stripe.customers.create({ email: "later@order.test" });
    // The first attempt has been made (and refused), whatever the machine's speed.
    const deadline = Date.now() + 10_000;
    while ((fake.deliveries()[0]?.attempts.length ?? 0) < 1) {
      if (Date.now() > deadline) throw new Error("the fake made no first delivery attempt");
      await new Promise((r) => setTimeout(r, 10));
    }
    const [first] = fake.deliveries();
    expect(first.attempts[0]?.status ?? null).toBeNull();
    expect(first.state).toBe("pending");

    // Bring a receiver up on the same port.
    const port = Number(new URL(url).port);
    const { createServer } = await import("node:http");
    const bodies: string[] = [];
    const server = createServer((req, res) => {
      let body = "";
      req.on("data", (c) => (body += c));
      req.on("end", () => {
        bodies.push(body);
        res.writeHead(200).end();
      });
    });
    await new Promise<void>((resolve) => server.listen(port, "127.0.0.1", resolve));
    cleanups.push(() => new Promise<void>((resolve) => server.close(() => resolve())));
    await fake.waitForWebhooks({ includeRetries: true, timeoutMs: 20_000 });
    expect(bodies).toHaveLength(1);
    expect(fake.deliveries()[0].state).toBe("succeeded");
  });

  it("resends an event on demand and delivers a given list in a given order", async () => {
    const { receiver, fake, stripe } = await setup();
    const a = await stripe.customers.create({ email: "a@replay.test" });
    const b = await stripe.customers.create({ email: "b@replay.test" });
    await receiver.waitFor(2);
    const [evA, evB] = receiver.received.map((r) => parse(r.body).id);

    const res = await fetch(`${fake.url}/_fake/events/${evA}/resend`, { method: "POST" });
    expect(res.status).toBe(200);
    expect(((await res.json()) as { attempts: Array<{ status: number }> }).attempts.map((x) => x.status)).toEqual([200]);
    expect(receiver.received).toHaveLength(3);
    expect(parse(receiver.received[2].body).id).toBe(evA);

    const ordered = await fetch(`${fake.url}/_fake/deliver`, { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify({ events: [evB, evA, evB] }) });
    expect(ordered.status).toBe(200);
    expect(receiver.received.slice(3).map((r) => (parse(r.body).data.object as Stripe.Customer).id)).toEqual([b.id, a.id, b.id]);

    const unknown = await fetch(`${fake.url}/_fake/events/evt_nope/resend`, { method: "POST" });
    expect(unknown.status).toBe(400);
  });
});

describe("webhook endpoints and events through the SDK", () => {
  it("creates, lists, updates and deletes endpoints; the secret is shown only at creation", async () => {
    const receiver = await startReceiver();
    const { fake, stripe } = await startFake();
    cleanups.push(() => receiver.close(), () => fake.close());
    const endpoint = await stripe.webhookEndpoints.create({ url: receiver.url, enabled_events: ["checkout.session.completed", "invoice.paid"] });
    expect(endpoint.id).toMatch(/^we_/);
    expect(endpoint.secret).toMatch(/^whsec_/);
    expect(endpoint).toMatchObject({ object: "webhook_endpoint", status: "enabled", enabled_events: ["checkout.session.completed", "invoice.paid"] });
    const listed = await stripe.webhookEndpoints.list();
    expect(listed.data.map((e) => e.id)).toEqual([endpoint.id]);
    expect(listed.data[0].secret).toBeUndefined();

    // Not subscribed to customer.created: nothing is sent.
    await stripe.customers.create({ email: "quiet@filter.test" });
    await fake.waitForWebhooks();
    expect(receiver.received).toHaveLength(0);

    const updated = await stripe.webhookEndpoints.update(endpoint.id, { enabled_events: ["*"] });
    expect(updated.enabled_events).toEqual(["*"]);
    await stripe.customers.create({ email: "loud@filter.test" });
    await receiver.waitFor(1);
    expect(verifier.webhooks.constructEvent(receiver.received[0].body, receiver.received[0].signature, endpoint.secret as string).type).toBe("customer.created");

    const deleted = await stripe.webhookEndpoints.del(endpoint.id);
    expect(deleted).toMatchObject({ id: endpoint.id, deleted: true });
    expect((await stripe.webhookEndpoints.list()).data).toHaveLength(0);
    const missing = await expectStripeError(stripe.webhookEndpoints.create({ url: receiver.url } as Stripe.WebhookEndpointCreateParams));
    expect(missing.param).toBe("enabled_events");
  });

  it("lists events newest first, filtered by type with a wildcard", async () => {
    const { fake } = await startFake();
    cleanups.push(() => fake.close());
    const stripe = sdkFor(fake);
    const c = await stripe.customers.create({ email: "events@filter.test" });
    await stripe.customers.update(c.id, { name: "Filter Studio" });
    await stripe.products.create({ name: "Filter pack" });
    const customerEvents = await stripe.events.list({ type: "customer.*" });
    expect(customerEvents.data.map((e) => e.type)).toEqual(["customer.updated", "customer.created"]);
    const updated = customerEvents.data[0];
    expect((updated.data.previous_attributes as { name: string | null }).name).toBeNull();
    const all = await stripe.events.list({ limit: 2 });
    expect(all.data[0].type).toBe("product.created");
    expect(all.has_more).toBe(true);
  });
});
