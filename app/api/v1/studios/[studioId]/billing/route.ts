import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { BILLING_PEOPLE } from "@/lib/auth/policies";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { billingSummary } from "@/lib/billing/queries";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth(BILLING_PEOPLE, async ({ studio }) => json(await billingSummary(await getDb(), studio.id)));

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
