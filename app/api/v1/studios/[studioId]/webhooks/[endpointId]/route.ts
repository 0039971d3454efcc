import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { OWNERS_ONLY } from "@/lib/auth/policies";
import { removeEndpoint } from "@/lib/webhooks/webhooks";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const DELETE = withAuth<typeof OWNERS_ONLY, { studioId: string; endpointId: string }>(OWNERS_ONLY, async ({ studio, params }) => {
  await removeEndpoint(await getDb(), studio.id, params.endpointId);
  return json({ removed: params.endpointId });
});

export const { GET, POST, PUT, PATCH, OPTIONS } = otherMethods(["DELETE"]);
