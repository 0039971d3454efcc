import { withAuth } from "@/lib/auth/guard";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { createStudio, createStudioSchema, studiosOfUser } from "@/lib/studios/studios";
import { SIGNED_IN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth(SIGNED_IN, async ({ user }) => {
  return json({ studios: await studiosOfUser(user.id) });
});

export const POST = withAuth(SIGNED_IN, async ({ req, user }) => {
  const studio = await createStudio(user.id, await parseBody(req, createStudioSchema));
  return json({ studio: { id: studio.id, name: studio.name, role: "owner" } }, 201);
});

export const { PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET", "POST"]);
