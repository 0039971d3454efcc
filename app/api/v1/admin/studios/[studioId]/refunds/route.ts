import { getDb } from "@/db/client";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { adminRefund, adminRefundSchema } from "@/lib/billing/refunds";
import { billingConfig } from "@/lib/billing/stripe";
import { pokeProcessRunner } from "@/lib/queue/poke";
import { adminStudioDetail } from "@/lib/quotas/admin";
import { PLATFORM_ADMIN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Refunds (part of) a pack purchase through Stripe; the minutes are taken back in the same call.
export const POST = withAuth<typeof PLATFORM_ADMIN, { studioId: string }>(PLATFORM_ADMIN, async ({ req, params, user }) => {
  const input = await parseBody(req, adminRefundSchema);
  const db = await getDb();
  await adminStudioDetail(db, params.studioId); // 404 for an unknown studio
  const result = await adminRefund(db, billingConfig().stripe, user!, params.studioId, input);
  pokeProcessRunner();
  return json(result, 201);
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
