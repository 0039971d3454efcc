/**
 * The Stripe client of this process. With STRIPE_SECRET_KEY (and STRIPE_WEBHOOK_SECRET) set it talks
 * to Stripe itself (use a test-mode key, sk_test_…); otherwise to the local Stripe fake that
 * server/startup.ts starts on STRIPE_FAKE_PORT (default 12111). STRIPE_API_URL sends a configured key to
 * another address (the compose file's fake service). Tests install their own with configureBilling.
 */
import "server-only";
import Stripe from "stripe";
import { ApiError } from "@/lib/errors";
import { isStripeFakeEnabled } from "@/lib/mail/mode";

export const DEFAULT_STRIPE_FAKE_PORT = 12111;

export interface BillingConfig {
  stripe: Stripe;
  /** The secret that signs webhook deliveries to /api/v1/stripe/webhook. */
  webhookSecret: string;
  mode: "fake" | "stripe";
  /** Base URL of the local fake (its control endpoints), when mode is "fake". */
  fakeUrl?: string;
}

const key = Symbol.for("kickdrift.billing");
type Holder = { [key]?: BillingConfig };

export function stripeFakePort(): number {
  const raw = process.env.STRIPE_FAKE_PORT;
  const port = raw ? Number(raw) : DEFAULT_STRIPE_FAKE_PORT;
  if (!Number.isInteger(port) || port < 0 || port > 65535) throw new RangeError(`STRIPE_FAKE_PORT must be a port number; got ${raw}`);
  return port;
}

/** True when no STRIPE_SECRET_KEY is configured and fakes are allowed (demo, development, tests), so the app runs against the local fake. */
export function usesStripeFake(): boolean {
  return isStripeFakeEnabled();
}

/** A client for the local fake on `port` (the fake accepts any sk_test_ key). */
export function fakeStripeClient(port: number): Stripe {
  return new Stripe("sk_test_kickdrift_local_fake", { host: "127.0.0.1", port, protocol: "http", maxNetworkRetries: 1, timeout: 10_000 });
}

export function configureBilling(config: BillingConfig | undefined): void {
  (globalThis as Holder)[key] = config;
}

/**
 * STRIPE_API_URL points the client at another Stripe-compatible address (the compose file's
 * Stripe fake service); unset means Stripe itself.
 */
export function stripeApiAddress(): { host?: string; port?: number; protocol?: "http" | "https" } {
  const raw = process.env.STRIPE_API_URL;
  if (!raw) return {};
  let url: URL;
  try {
    url = new URL(raw);
  } catch {
    throw new RangeError(`STRIPE_API_URL must be a URL such as http://stripe:12111; got ${raw}`);
  }
  if (url.protocol !== "http:" && url.protocol !== "https:") throw new RangeError(`STRIPE_API_URL must use http or https; got ${raw}`);
  const protocol = url.protocol === "http:" ? "http" : "https";
  return { host: url.hostname, port: Number(url.port || (protocol === "http" ? 80 : 443)), protocol };
}

/** The configured client and webhook secret; 503 when billing is not available in this process. */
export function billingConfig(): BillingConfig {
  const holder = globalThis as Holder;
  if (holder[key]) return holder[key];
  const secretKey = process.env.STRIPE_SECRET_KEY;
  if (secretKey) {
    const webhookSecret = process.env.STRIPE_WEBHOOK_SECRET;
    if (!webhookSecret) throw new ApiError("billing_unavailable", "STRIPE_WEBHOOK_SECRET must be set together with STRIPE_SECRET_KEY.");
    holder[key] = { stripe: new Stripe(secretKey, { maxNetworkRetries: 2, timeout: 20_000, ...stripeApiAddress() }), webhookSecret, mode: "stripe" };
    return holder[key];
  }
  if (!usesStripeFake()) throw new ApiError("billing_unavailable", "Billing is not configured on this server (STRIPE_SECRET_KEY is not set).");
  throw new ApiError("billing_unavailable", "Billing is starting up (the local Stripe fake is not running yet); try again in a moment.");
}

/** Maps a Stripe SDK failure to a 503 (Stripe unreachable) or 502 (Stripe refused), never a 500. */
export function stripeFailure(error: unknown): ApiError {
  if (error instanceof ApiError) return error;
  if (error instanceof Stripe.errors.StripeConnectionError || error instanceof Stripe.errors.StripeAPIError)
    return new ApiError("billing_unavailable", "The payment provider cannot be reached; nothing was charged. Try again shortly.");
  if (error instanceof Stripe.errors.StripeError) return new ApiError("payment_provider_error", `The payment provider refused the request: ${error.message}`);
  return new ApiError("internal_error", "Something went wrong on our side.");
}
