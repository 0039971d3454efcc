import { getDb } from "@/db/client";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { OWNERS_ONLY } from "@/lib/auth/policies";
import { createEndpoint, createEndpointSchema, listEndpoints } from "@/lib/webhooks/webhooks";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Owners manage where the studio's events go (session only: tokens never register endpoints).
export const GET = withAuth(OWNERS_ONLY, async ({ studio }) => {
  return json({ endpoints: await listEndpoints(await getDb(), studio.id) });
});

/** 201 { endpoint, secret }: the signing secret is answered only here. */
export const POST = withAuth(OWNERS_ONLY, async ({ req, studio, user }) => {
  const input = await parseBody(req, createEndpointSchema);
  return json(await createEndpoint(await getDb(), studio.id, user!, input), 201);
});

export const { PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET", "POST"]);
