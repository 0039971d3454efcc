import { withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { acceptInvite } from "@/lib/studios/invites";
import { SIGNED_IN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const POST = withAuth(SIGNED_IN, async ({ params, user }) => {
  return json({ studio: await acceptInvite(params.token, user) });
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
