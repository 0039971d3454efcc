import { withAuth } from "@/lib/auth/guard";
import { endUserSessions } from "@/lib/auth/user-sessions";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { SIGNED_IN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// "Sign out everywhere": ends every session of the signed-in person, this one included.
export const DELETE = withAuth(SIGNED_IN, async ({ user }) => {
  const ended = await endUserSessions(user.id);
  return json({ ended });
});

export const { GET, POST, PUT, PATCH, OPTIONS } = otherMethods(["DELETE"]);
