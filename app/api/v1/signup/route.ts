import { signUp, signUpSchema } from "@/lib/auth/accounts";
import { withAuth } from "@/lib/auth/guard";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const POST = withAuth({ access: "public" }, async ({ req }) => {
  const input = await parseBody(req, signUpSchema);
  const user = await signUp(input);
  return json({ user: { id: user.id, email: user.email, name: user.name } }, 201);
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
