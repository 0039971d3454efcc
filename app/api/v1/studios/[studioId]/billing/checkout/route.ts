import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { BILLING_PEOPLE } from "@/lib/auth/policies";
import { parseBody } from "@/lib/api/body";
import { consumeRateLimit } from "@/lib/auth/rate-limits";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { checkoutSchema, createCheckout } from "@/lib/billing/checkout";
import { billingConfig } from "@/lib/billing/stripe";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Starts a Stripe Checkout for one credit pack; the browser goes to `url` and comes back to the billing page.
export const POST = withAuth(BILLING_PEOPLE, async ({ req, studio, user }) => {
  const input = await parseBody(req, checkoutSchema);
  // Each call opens a session at the payment provider: limited per studio.
  await consumeRateLimit("checkoutPerStudio", studio.id);
  const session = await createCheckout(await getDb(), billingConfig().stripe, studio.id, user!, input);
  return json(session, 201);
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
