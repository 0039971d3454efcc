/**
 * Signing of webhook deliveries, as the open Standard Webhooks specification defines it: headers
 * `webhook-id` (the event id), `webhook-timestamp` (Unix seconds) and `webhook-signature`
 * (`v1,` + base64 HMAC-SHA256 of `{id}.{timestamp}.{body}`, keyed by the base64 part of the
 * endpoint's `whsec_…` secret). Receivers verify with any Standard Webhooks library, or in a few
 * lines (docs/api.md, "Webhooks"). The timestamp bounds replays to the tolerance window; the event
 * id lets a receiver drop a replay inside it.
 */
import "server-only";
import { createHmac, randomBytes, timingSafeEqual } from "node:crypto";

export const WEBHOOK_SECRET_PREFIX = "whsec_";
/** How old (or how far ahead) a delivery's timestamp may be when verified: 5 minutes (common practice). */
export const WEBHOOK_TOLERANCE_S = 300;

export function newWebhookSecret(): string {
  return WEBHOOK_SECRET_PREFIX + randomBytes(32).toString("base64");
}

function key(secret: string): Buffer {
  return Buffer.from(secret.startsWith(WEBHOOK_SECRET_PREFIX) ? secret.slice(WEBHOOK_SECRET_PREFIX.length) : secret, "base64");
}

/** The `webhook-signature` value for one delivery. */
export function signWebhook(secret: string, eventId: string, timestampS: number, body: string): string {
  return `v1,${createHmac("sha256", key(secret)).update(`${eventId}.${timestampS}.${body}`).digest("base64")}`;
}

export function webhookHeaders(secret: string, eventId: string, timestampS: number, body: string): Record<string, string> {
  return {
    "content-type": "application/json",
    "webhook-id": eventId,
    "webhook-timestamp": String(timestampS),
    "webhook-signature": signWebhook(secret, eventId, timestampS, body),
  };
}

/** Why a delivery does not verify. */
export class WebhookVerificationError extends Error {}

/**
 * Checks a delivery as a receiver would: the timestamp within the tolerance of `nowS`, and one of
 * the space-separated `v1,` signatures equal (in constant time) to the expected one.
 */
export function verifyWebhook(secret: string, headers: { id: string; timestamp: string; signature: string }, body: string, nowS: number, toleranceS = WEBHOOK_TOLERANCE_S): void {
  const timestampS = Number(headers.timestamp);
  if (!/^[0-9]+$/.test(headers.timestamp) || Math.abs(nowS - timestampS) > toleranceS) throw new WebhookVerificationError("timestamp outside the tolerance window");
  const expected = Buffer.from(signWebhook(secret, headers.id, timestampS, body));
  const ok = headers.signature.split(" ").some((candidate) => {
    const given = Buffer.from(candidate);
    return given.length === expected.length && timingSafeEqual(given, expected);
  });
  if (!ok) throw new WebhookVerificationError("no signature matches");
}
