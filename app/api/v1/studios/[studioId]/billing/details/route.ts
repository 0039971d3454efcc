import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { BILLING_PEOPLE, OWNERS_ONLY } from "@/lib/auth/policies";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { billingDetails, billingDetailsSchema, updateBillingDetails } from "@/lib/billing/details";
import { billingConfig } from "@/lib/billing/stripe";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth(BILLING_PEOPLE, async ({ studio }) => json(await billingDetails(await getDb(), studio.id)));

// Owners set the billing e-mail, address and tax ID; the whole record is sent each time (null clears a field).
export const PUT = withAuth(OWNERS_ONLY, async ({ req, studio, user }) => {
  const input = await parseBody(req, billingDetailsSchema);
  return json(await updateBillingDetails(await getDb(), billingConfig().stripe, user!, studio.id, input));
});

export const { POST, PATCH, DELETE, OPTIONS } = otherMethods(["GET", "PUT"]);
