import { withAuth } from "@/lib/auth/guard";
import { MEMBERS_READ } from "@/lib/auth/policies";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { listMembers } from "@/lib/studios/members";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth(MEMBERS_READ, async ({ studio }) => {
  return json({ members: await listMembers(studio.id) });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
