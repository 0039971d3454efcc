import { publicUser } from "@/lib/auth/accounts";
import { withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { studiosOfUser } from "@/lib/studios/studios";
import { SIGNED_IN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth(SIGNED_IN, async ({ user }) => {
  return json({ user: publicUser(user), studios: await studiosOfUser(user.id) });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
