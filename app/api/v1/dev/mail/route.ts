import { withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { ApiError } from "@/lib/errors";
import { listCapturedMail } from "@/lib/mail/mailbox";
import { isMailFakeEnabled } from "@/lib/mail/transport";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// The local mailbox: only while the mail fake stands in for SMTP (no SMTP_URL); otherwise it does not exist.
export const GET = withAuth({ access: "public" }, async () => {
  if (!isMailFakeEnabled()) throw new ApiError(404, "not_found", "No API route at GET /api/v1/dev/mail.");
  return json({ messages: await listCapturedMail() });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
