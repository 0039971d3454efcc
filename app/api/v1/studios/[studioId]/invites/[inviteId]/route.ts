import { withAuth } from "@/lib/auth/guard";
import { OWNERS_ONLY } from "@/lib/auth/policies";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { deleteInvite } from "@/lib/studios/invites";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const DELETE = withAuth(OWNERS_ONLY, async ({ studio, params, user }) => {
  await deleteInvite(studio.id, params.inviteId, user ?? null);
  return json({ deleted: { id: params.inviteId } });
});

export const { GET, POST, PUT, PATCH, OPTIONS } = otherMethods(["DELETE"]);
