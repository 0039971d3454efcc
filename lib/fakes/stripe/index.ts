import "server-only";

/**
 * Local Stripe fake: speaks Stripe's v1 wire protocol for the calls Kickdrift makes, so the official
 * SDK (`new Stripe(key, { host, port, protocol: "http" })`) works against it unchanged.
 */
export { startStripeFake, ensureStripeFake, DEFAULT_API_VERSION, type StripeFake, type StripeFakeOptions, type OutageMode } from "./server";
export { StripeFakeStore, type StripeObject, type Delivery, type DeliveryAttempt } from "./store";
export { signatureHeader, eventPayload, DEFAULT_RETRY_DELAYS_MS } from "./webhooks";
export { parseForm, encodeForm } from "./form";
export { lineAmountCents } from "./money";
