import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { OWNERS_ONLY } from "@/lib/auth/policies";
import { pokeOutbox } from "@/lib/outbox/process";
import { resendDelivery } from "@/lib/webhooks/webhooks";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/** "Send again": 202 { delivery }; the same event (same id) is queued to the endpoint once more. */
export const POST = withAuth<typeof OWNERS_ONLY, { studioId: string; endpointId: string; eventId: string }>(OWNERS_ONLY, async ({ studio, params }) => {
  const delivery = await resendDelivery(await getDb(), studio.id, params.endpointId, params.eventId);
  pokeOutbox();
  return json({ delivery }, 202);
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
