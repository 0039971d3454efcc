import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { BILLING_PEOPLE } from "@/lib/auth/policies";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { checkPayment, parseSessionId } from "@/lib/billing/payments";
import { billingConfig } from "@/lib/billing/stripe";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// "Check my payment": the return page asks Stripe about its own session, so a late or lost webhook never leaves a paid pack uncredited.
// The id is checked before billing is: a malformed one is the caller's 400, never a 503 for a Stripe the app lacks.
export const POST = withAuth<typeof BILLING_PEOPLE, { studioId: string; sessionId: string }>(BILLING_PEOPLE, async ({ studio, params }) => {
  const sessionId = parseSessionId(params.sessionId);
  return json(await checkPayment(await getDb(), billingConfig().stripe, studio.id, sessionId));
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
