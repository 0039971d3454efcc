import { withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { errorResponse, json } from "@/lib/api/respond";
import { ApiError } from "@/lib/errors";
import { listCapturedMail } from "@/lib/mail/mailbox";
import { isMailFakeEnabled } from "@/lib/mail/transport";
import { PLATFORM_ADMIN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

const notHere = () => errorResponse(new ApiError("not_found", "No API route at GET /api/v1/dev/mail."));

// The local mailbox: only a signed-in platform admin reads it (captured mail holds sign-in, reset and
// invite links), and only while the mail fake stands in for SMTP (demo, development, tests; no SMTP_URL).
const readMailbox = withAuth(PLATFORM_ADMIN, async () => json({ messages: await listCapturedMail() }));

// Where the fake is off the route does not exist, for everyone alike (checked before who is asking).
export const GET = Object.assign(
  (req: Request, context: { params: Promise<Record<string, string>> }) => (isMailFakeEnabled() ? readMailbox(req, context) : Promise.resolve(notHere())),
  { policy: readMailbox.policy },
);

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
