import { withAuth } from "@/lib/auth/guard";
import { OWNERS_ONLY } from "@/lib/auth/policies";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { changeRole, changeRoleSchema, removeMember } from "@/lib/studios/members";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const PATCH = withAuth(OWNERS_ONLY, async ({ req, studio, params, user }) => {
  const { role } = await parseBody(req, changeRoleSchema);
  return json({ member: await changeRole(studio.id, params.userId, role, user) });
});

export const DELETE = withAuth(OWNERS_ONLY, async ({ studio, params, user }) => {
  await removeMember(studio.id, params.userId, user);
  return json({ removed: { userId: params.userId } });
});

export const { GET, POST, PUT, OPTIONS } = otherMethods(["PATCH", "DELETE"]);
