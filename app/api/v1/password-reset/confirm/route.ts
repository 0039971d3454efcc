import { confirmPasswordReset, passwordResetConfirmSchema } from "@/lib/auth/accounts";
import { withAuth } from "@/lib/auth/guard";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { PUBLIC } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const POST = withAuth(PUBLIC, async ({ req }) => {
  await confirmPasswordReset(await parseBody(req, passwordResetConfirmSchema));
  return json({ ok: true });
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
