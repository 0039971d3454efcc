import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { tokenView } from "@/lib/auth/api-tokens";
import { withAuth } from "@/lib/auth/guard";
import { ApiError } from "@/lib/errors";
import { PUBLIC } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/**
 * The API token presenting itself: its studio and scopes, so a script holding only a token
 * (the command-line client) knows which studio's routes to call. People use /me instead.
 */
export const GET = withAuth(PUBLIC, async ({ actor }) => {
  if (actor === null) throw new ApiError("unauthenticated", "Present an API token (Authorization: Bearer kd_…).");
  if (actor.kind !== "token") throw new ApiError("forbidden", "This route answers for API tokens; a signed-in person uses /api/v1/me.");
  return json({ token: { ...tokenView(actor.token), studioId: actor.token.studioId } });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
