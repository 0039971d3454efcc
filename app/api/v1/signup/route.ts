import { signUp, signUpSchema } from "@/lib/auth/accounts";
import { withAuth } from "@/lib/auth/guard";
import { clientAddress } from "@/lib/auth/limiter";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { PUBLIC } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const POST = withAuth(PUBLIC, async ({ req }) => {
  const input = await parseBody(req, signUpSchema);
  await signUp(input, clientAddress(req.headers));
  // The same answer whether the address was new or already had an account (its owner gets a mail).
  return json({ accepted: true, message: "If this address is new to Kickdrift, its account is ready: sign in with your password. If it already had one, we sent its owner a mail." }, 202);
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
