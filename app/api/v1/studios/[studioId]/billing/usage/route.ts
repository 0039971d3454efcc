import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { BILLING_PEOPLE } from "@/lib/auth/policies";
import { parseWith } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { usageBreakdown, usageQuerySchema } from "@/lib/billing/queries";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth(BILLING_PEOPLE, async ({ req, studio }) => {
  const { days } = parseWith(usageQuerySchema, Object.fromEntries(new URL(req.url).searchParams));
  return json(await usageBreakdown(await getDb(), studio.id, days));
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
