import { revokeApiToken } from "@/lib/auth/api-tokens";
import { withAuth } from "@/lib/auth/guard";
import { OWNERS_ONLY } from "@/lib/auth/policies";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Revokes; the row stays (with revokedAt) so the list still shows it.
export const DELETE = withAuth(OWNERS_ONLY, async ({ studio, params, user }) => {
  return json({ token: await revokeApiToken(studio.id, params.tokenId, user) });
});

export const { GET, POST, PUT, PATCH, OPTIONS } = otherMethods(["DELETE"]);
