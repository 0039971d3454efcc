import { passwordResetRequestSchema, requestPasswordReset } from "@/lib/auth/accounts";
import { withAuth } from "@/lib/auth/guard";
import { clientAddress } from "@/lib/auth/limiter";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { PUBLIC } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// 202 whether or not the account exists, so the answer reveals nothing.
export const POST = withAuth(PUBLIC, async ({ req }) => {
  const { email } = await parseBody(req, passwordResetRequestSchema);
  await requestPasswordReset(email, clientAddress(req.headers));
  return json({ ok: true }, 202);
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
