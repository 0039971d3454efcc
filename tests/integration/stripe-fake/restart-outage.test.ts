import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import Stripe from "stripe";
import { ensureStripeFake, startStripeFake } from "@/lib/fakes/stripe";
import { expectStripeError, sdkFor, startFake, startReceiver } from "./helpers";

const dir = mkdtempSync(join(tmpdir(), "kd-stripe-fake-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("state survives a restart when a state file is given", () => {
  it("keeps customers, meter totals, idempotency keys and pending webhooks, which resume by themselves", async () => {
    const statePath = join(dir, "state.json");
    const receiver = await startReceiver(() => 500);
    const first = await startStripeFake({ store: statePath, webhookUrl: receiver.url, webhookSecret: "whsec_restart_secret_0001", webhookRetryDelaysMs: [700] });
    const stripe = sdkFor(first);
    const customer = await stripe.customers.create({ email: "restart@quarry-bell.test" }, { idempotencyKey: "kd-restart-1" });
    const meter = await stripe.billing.meters.create({ display_name: "Restart meter", event_name: "kd_restart_ms", default_aggregation: { formula: "sum" } });
    await stripe.billing.meterEvents.create({ event_name: "kd_restart_ms", identifier: "restart:0", payload: { stripe_customer_id: customer.id, value: "700" } });
    await receiver.waitFor(1); // first attempts fail; the retries are due 700 ms later
    const firstRunEvents = first.deliveries().map((d) => d.event);
    expect(first.deliveries().every((d) => d.state === "pending")).toBe(true);
    await first.close();
    await receiver.close();

    // The app comes back on the same port, now answering 200.
    const receiver2 = await startReceiver(() => 200, Number(new URL(receiver.url).port));
    const second = await startStripeFake({ store: statePath, webhookRetryDelaysMs: [20] });
    try {
      const again = sdkFor(second);
      expect((await again.customers.retrieve(customer.id)).id).toBe(customer.id);
      const replay = await again.customers.create({ email: "restart@quarry-bell.test" }, { idempotencyKey: "kd-restart-1" });
      expect(replay.id).toBe(customer.id);
      const start = Math.floor((second.now() - 3600) / 60) * 60;
      const summary = await again.billing.meters.listEventSummaries(meter.id, { customer: customer.id, start_time: start, end_time: start + 7200 });
      // The one 700 ms event recorded before the restart (arithmetic).
      expect(summary.data[0].aggregated_value).toBe(700);
      const dup = await expectStripeError(again.billing.meterEvents.create({ event_name: "kd_restart_ms", identifier: "restart:0", payload: { stripe_customer_id: customer.id, value: "700" } }));
      expect(dup.code).toBe("resource_already_exists");

      expect((await again.webhookEndpoints.list()).data.map((e) => e.url)).toEqual([receiver.url]);
      await second.waitForWebhooks({ includeRetries: true, timeoutMs: 5_000 });
      // customer.created and billing.meter.created, each delivered once after the restart.
      expect(firstRunEvents).toHaveLength(2);
      expect(receiver2.received.map((r) => JSON.parse(r.body).id).sort()).toEqual([...firstRunEvents].sort());
      expect(second.deliveries().map((d) => d.state)).toEqual(["succeeded", "succeeded"]);
      const v = new Stripe("sk_test_verifier_only_0002");
      for (const r of receiver2.received) expect(v.webhooks.constructEvent(r.body, r.signature, "whsec_restart_secret_0001").object).toBe("event");
    } finally {
      await second.close();
      await receiver2.close();
    }
  });
});

describe("simulated outage", () => {
  it("answers 503 api_error to every API call while down, and recovers", async () => {
    const { fake, stripe } = await startFake();
    try {
      const before = await stripe.customers.create({ email: "outage@quarry-bell.test" });
      const down = await fetch(`${fake.url}/_fake/outage`, { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify({ down: true }) });
      expect(down.status).toBe(200);
      const err = await expectStripeError(stripe.customers.retrieve(before.id));
      expect(err).toBeInstanceOf(Stripe.errors.StripeAPIError);
      expect(err.statusCode).toBe(503);
      const meterErr = await expectStripeError(stripe.billing.meterEvents.create({ event_name: "x", payload: { value: "1" } }));
      expect(meterErr.statusCode).toBe(503);
      await fetch(`${fake.url}/_fake/outage`, { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify({ down: false }) });
      expect((await stripe.customers.retrieve(before.id)).id).toBe(before.id);
    } finally {
      await fake.close();
    }
  });

  it("drops connections in reset mode, which the SDK reports as a connection error", async () => {
    const { fake } = await startFake();
    try {
      const stripe = sdkFor(fake);
      fake.setOutage(true, "reset");
      const err = await expectStripeError(stripe.customers.list());
      expect(err).toBeInstanceOf(Stripe.errors.StripeConnectionError);
      fake.setOutage(false);
      expect((await stripe.customers.list()).object).toBe("list");
    } finally {
      await fake.close();
    }
  });
});

describe("one fake per process", () => {
  it("ensureStripeFake hands back the running instance, and a new one after close", async () => {
    const a = await ensureStripeFake({ port: 0 });
    const b = await ensureStripeFake({ port: 0 });
    expect(b).toBe(a);
    await a.close();
    const c = await ensureStripeFake({ port: 0 });
    try {
      expect(c).not.toBe(a);
      expect((await sdkFor(c).customers.list()).object).toBe("list");
    } finally {
      await c.close();
    }
  });
});
