import { getDb } from "@/db/client";
import { BILLING_PEOPLE, withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { checkPayment } from "@/lib/billing/payments";
import { billingConfig } from "@/lib/billing/stripe";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// "Check my payment": the return page asks Stripe about its own session, so a late or lost webhook never leaves a paid pack uncredited.
export const POST = withAuth<typeof BILLING_PEOPLE, { studioId: string; sessionId: string }>(BILLING_PEOPLE, async ({ studio, params }) =>
  json(await checkPayment(await getDb(), billingConfig().stripe, studio.id, params.sessionId)),
);

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
