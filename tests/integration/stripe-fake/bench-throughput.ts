/**
 * Throughput of the Stripe fake through the official SDK (not a test; prints figures):
 *   npx tsx --import ./scripts/server-only-hook.mjs tests/integration/stripe-fake/bench-throughput.ts [events=2000]
 * Measures sequential meter events (the app's outbox pattern) in memory and with a state file, and a
 * Checkout create → hosted page pay round trip.
 */
import { mkdtempSync, rmSync, statSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import Stripe from "stripe";
import { startStripeFake } from "../../../lib/fakes/stripe";

function percentile(sorted: number[], p: number): number {
  return sorted[Math.min(sorted.length - 1, Math.floor((p / 100) * sorted.length))];
}

async function meterEvents(count: number, statePath?: string) {
  const fake = await startStripeFake({ store: statePath });
  const stripe = new Stripe("sk_test_bench_000001", { host: "127.0.0.1", port: fake.port, protocol: "http", maxNetworkRetries: 0 });
  const customer = await stripe.customers.create({ email: "bench@quarry-bell.test" });
  await stripe.billing.meters.create({ display_name: "bench", event_name: "kd_bench_ms", default_aggregation: { formula: "sum" } });
  const latencies: number[] = [];
  const started = performance.now();
  for (let i = 0; i < count; i++) {
    const t = performance.now();
    await stripe.billing.meterEvents.create({ event_name: "kd_bench_ms", identifier: `bench:${i}`, payload: { stripe_customer_id: customer.id, value: "1000" } });
    latencies.push(performance.now() - t);
  }
  const elapsed = performance.now() - started;
  await fake.close();
  latencies.sort((a, b) => a - b);
  const size = statePath ? statSync(statePath).size : 0;
  console.log(
    `meter events ${statePath ? "with state file" : "in memory      "}: ${count} in ${elapsed.toFixed(0)} ms = ${((count / elapsed) * 1000).toFixed(0)}/s; ` +
      `p50 ${percentile(latencies, 50).toFixed(2)} ms, p95 ${percentile(latencies, 95).toFixed(2)} ms, max ${latencies[latencies.length - 1].toFixed(2)} ms` +
      (statePath ? `; state file ${(size / 1024).toFixed(0)} KiB` : ""),
  );
}

async function checkoutRoundTrips(count: number) {
  const fake = await startStripeFake({});
  const stripe = new Stripe("sk_test_bench_000002", { host: "127.0.0.1", port: fake.port, protocol: "http", maxNetworkRetries: 0 });
  const price = await stripe.prices.create({ currency: "usd", unit_amount: 4900, product_data: { name: "bench pack" } });
  const started = performance.now();
  for (let i = 0; i < count; i++) {
    const session = await stripe.checkout.sessions.create({ mode: "payment", success_url: "http://127.0.0.1/ok", line_items: [{ price: price.id, quantity: 1 }] });
    const res = await fetch(session.url as string, { method: "POST", body: new URLSearchParams({ card_number: "4242424242424242" }), redirect: "manual" });
    if (res.status !== 303) throw new Error(`unexpected status ${res.status}`);
  }
  const elapsed = performance.now() - started;
  await fake.close();
  console.log(`checkout create + hosted pay: ${count} in ${elapsed.toFixed(0)} ms = ${(elapsed / count).toFixed(2)} ms each`);
}

const count = Number(process.argv[2] ?? 2000);
if (!Number.isInteger(count) || count < 1) throw new Error("events must be a positive integer");
const dir = mkdtempSync(join(tmpdir(), "kd-stripe-bench-"));
try {
  await meterEvents(count);
  await meterEvents(count, join(dir, "state.json"));
  await checkoutRoundTrips(Math.max(1, Math.floor(count / 10)));
} finally {
  rmSync(dir, { recursive: true, force: true });
}
