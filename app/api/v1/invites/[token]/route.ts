import { withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { describeInvite } from "@/lib/studios/invites";
import { PUBLIC } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Public: whoever holds the mailed link may see which studio and role it offers.
export const GET = withAuth(PUBLIC, async ({ params }) => {
  return json({ invite: await describeInvite(params.token) });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
