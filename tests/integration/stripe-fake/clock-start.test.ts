/**
 * The fake's clock can start in the past while it holds no customer (the demo seed's past months):
 * objects and meter windows then follow that clock; once a customer exists, the clock only moves
 * forward. Times are relative to now, so the test holds on any date.
 */
import { afterEach, describe, expect, it } from "vitest";
import type { StripeFake } from "@/lib/fakes/stripe";
import { startFake } from "./helpers";

let fake: StripeFake | undefined;
afterEach(async () => {
  await fake?.close();
  fake = undefined;
});

const DAY = 86_400;
const post = (path: string, body: Record<string, unknown>) =>
  fetch(`${fake!.url}${path}`, { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });

describe("starting the fake clock in the past", () => {
  it("dates objects and accepts meter events on the started clock, then refuses to move back once a customer exists", async () => {
    const started = await startFake();
    fake = started.fake;
    const { stripe } = started;
    const past = Math.floor(Date.now() / 1000) - 90 * DAY;
    const answer = await post("/_fake/start_clock", { to: past });
    expect(answer.status).toBe(200);
    const { now } = (await answer.json()) as { now: number };
    // The clock runs on from `past` (a loaded machine may take a few seconds between the calls).
    expect(now - past).toBeGreaterThanOrEqual(0);
    expect(now - past).toBeLessThan(60);

    const customer = await stripe.customers.create({ name: "Lantern Ferry Games" });
    expect(customer.created - past).toBeLessThan(60);
    expect(customer.created).toBeGreaterThanOrEqual(past);

    // A meter event 90 days before the wall clock is inside Stripe's 35-day window of the fake's clock.
    const meter = await stripe.billing.meters.create({
      display_name: "compute",
      event_name: "clock_start_compute",
      default_aggregation: { formula: "sum" },
      customer_mapping: { type: "by_id", event_payload_key: "stripe_customer_id" },
      value_settings: { event_payload_key: "value" },
    });
    expect(meter.status).toBe("active");
    const event = await stripe.billing.meterEvents.create({ event_name: "clock_start_compute", timestamp: past + 10, payload: { stripe_customer_id: customer.id, value: "5" } });
    expect(event.timestamp).toBe(past + 10);

    // With a customer on the books the clock cannot start again, in the past or anywhere.
    const again = await post("/_fake/start_clock", { to: past - DAY });
    expect(again.status).toBe(400);
    expect(((await again.json()) as { error: { param: string; message: string } }).error).toMatchObject({ param: "to", message: expect.stringContaining("before the first customer") });
    const backwards = await post("/_fake/advance_clock", { to: past - DAY });
    expect(backwards.status).toBe(400);
    // Forward to the present works as before.
    const present = Math.floor(Date.now() / 1000);
    expect((await post("/_fake/advance_clock", { to: present })).status).toBe(200);
    expect(fake.now() - present).toBeLessThan(60);
    expect(fake.now()).toBeGreaterThanOrEqual(present);
  });

  it("refuses a `to` that is not a unix time, naming the field", async () => {
    fake = (await startFake()).fake;
    const answer = await post("/_fake/start_clock", { to: "yesterday" });
    expect(answer.status).toBe(400);
    expect(((await answer.json()) as { error: { param: string } }).error.param).toBe("to");
  });
});
