import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { OWNERS_ONLY } from "@/lib/auth/policies";
import { listDeliveries } from "@/lib/webhooks/webhooks";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/** The endpoint's delivery log, newest first (at most 100): status, attempts, last response code. */
export const GET = withAuth<typeof OWNERS_ONLY, { studioId: string; endpointId: string }>(OWNERS_ONLY, async ({ studio, params }) => {
  return json({ deliveries: await listDeliveries(await getDb(), studio.id, params.endpointId) });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
