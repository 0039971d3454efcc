import { createServer, type IncomingMessage, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import Stripe from "stripe";
import { afterAll, beforeAll } from "vitest";
import { startStripeFake, type StripeFake, type StripeFakeOptions } from "@/lib/fakes/stripe";

export const TEST_KEY = "sk_test_kickdrift_contract_0001";

/** The official SDK pointed at the fake, with SDK retries off so every test sees the first answer. */
export function sdkFor(fake: StripeFake, key = TEST_KEY, extra: Partial<Stripe.StripeConfig> = {}): Stripe {
  return new Stripe(key, { host: "127.0.0.1", port: fake.port, protocol: "http", maxNetworkRetries: 0, ...extra });
}

export async function startFake(options: StripeFakeOptions = {}): Promise<{ fake: StripeFake; stripe: Stripe }> {
  const fake = await startStripeFake({ port: 0, webhookRetryDelaysMs: [50, 100, 200], ...options });
  return { fake, stripe: sdkFor(fake) };
}

/** One fake for a whole test file: started before its tests (`take` receives it) and closed after them. */
export function startFakeForFile(take: (started: { fake: StripeFake; stripe: Stripe }) => void): void {
  let fake: StripeFake | undefined;
  beforeAll(async () => {
    const started = await startFake();
    fake = started.fake;
    take(started);
  });
  afterAll(async () => {
    await fake?.close();
  });
}

export interface ReceivedWebhook {
  body: string;
  signature: string;
  at: number;
}

/**
 * A webhook receiver like the app's route: records raw bodies and signatures; `respond` decides the
 * status per request (to simulate a failing app).
 */
export async function startReceiver(respond: (n: number, body: string) => number = () => 200, port = 0): Promise<{
  url: string;
  received: ReceivedWebhook[];
  close(): Promise<void>;
  waitFor(count: number, timeoutMs?: number): Promise<void>;
  server: Server;
}> {
  const received: ReceivedWebhook[] = [];
  let n = 0;
  const server = createServer((req: IncomingMessage, res) => {
    const chunks: Buffer[] = [];
    req.on("data", (c: Buffer) => chunks.push(c));
    req.on("end", () => {
      const body = Buffer.concat(chunks).toString("utf8");
      n += 1;
      received.push({ body, signature: String(req.headers["stripe-signature"] ?? ""), at: Date.now() });
      res.writeHead(respond(n, body), { "content-type": "application/json" });
      res.end("{}");
    });
  });
  await new Promise<void>((resolve) => server.listen(port, "127.0.0.1", resolve));
  const bound = (server.address() as AddressInfo).port;
  return {
    url: `http://127.0.0.1:${bound}/api/stripe/webhook`,
    received,
    server,
    close: () =>
      new Promise<void>((resolve) => {
        server.closeAllConnections();
        server.close(() => resolve());
      }),
    async waitFor(count, timeoutMs = 5_000) {
      const deadline = Date.now() + timeoutMs;
      while (received.length < count) {
        if (Date.now() > deadline) throw new Error(`expected ${count} webhooks, got ${received.length}`);
        await new Promise((r) => setTimeout(r, 10));
      }
    },
  };
}

/** What a caught SDK error carries, typed for assertions. */
export function asStripeError(err: unknown): Stripe.errors.StripeError {
  if (err instanceof Stripe.errors.StripeError) return err;
  throw new Error(`expected a StripeError, got ${String(err)}`);
}

export async function expectStripeError(promise: Promise<unknown>): Promise<Stripe.errors.StripeError> {
  try {
    await promise;
  } catch (err) {
    return asStripeError(err);
  }
  throw new Error("expected the call to fail");
}
