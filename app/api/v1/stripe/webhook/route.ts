import Stripe from "stripe";
import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { readBodyText } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { billingConfig } from "@/lib/billing/stripe";
import { handleStripeEvent } from "@/lib/billing/webhook";
import { ApiError } from "@/lib/errors";
import { PUBLIC } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/** Stripe events are small; anything larger is not from Stripe. */
const MAX_WEBHOOK_BYTES = 512 * 1024;

// Public: Stripe calls it. Authenticity comes from the signature over the raw body, checked first.
export const POST = withAuth(PUBLIC, async ({ req }) => {
  const signature = req.headers.get("stripe-signature");
  if (!signature) throw new ApiError("invalid_signature", "The Stripe-Signature header is missing.", "stripe-signature");
  const raw = await readBodyText(req, MAX_WEBHOOK_BYTES);
  const { stripe, webhookSecret } = billingConfig();
  let event: unknown;
  try {
    event = stripe.webhooks.constructEvent(raw, signature, webhookSecret);
  } catch (error) {
    // By the error's type, not instanceof: the SDK the client was built from may be another copy
    // of the module (its CommonJS and ESM builds load separately), whose classes differ.
    if (error instanceof Stripe.errors.StripeSignatureVerificationError || (error as { type?: unknown })?.type === "StripeSignatureVerificationError")
      throw new ApiError("invalid_signature", "The Stripe-Signature does not match the body (or is too old).", "stripe-signature");
    throw new ApiError("invalid_json", "The signed body is not a JSON event.");
  }
  return json(await handleStripeEvent(await getDb(), stripe, event));
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
