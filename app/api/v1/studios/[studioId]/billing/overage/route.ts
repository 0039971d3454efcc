import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { OWNERS_ONLY } from "@/lib/auth/policies";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { overageSwitchSchema, setOverageOn } from "@/lib/billing/overage-switch";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// The owner turns overage on or off within what a platform admin permits (409 naming overageOn if it is not permitted).
export const PUT = withAuth(OWNERS_ONLY, async ({ req, studio, user }) => {
  const input = await parseBody(req, overageSwitchSchema);
  return json(await setOverageOn(await getDb(), user!, studio.id, input));
});

export const { GET, POST, PATCH, DELETE, OPTIONS } = otherMethods(["PUT"]);
