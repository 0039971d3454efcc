import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { BILLING_READERS } from "@/lib/auth/policies";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { invoiceDetail } from "@/lib/billing/queries";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth<typeof BILLING_READERS, { studioId: string; invoiceId: string }>(BILLING_READERS, async ({ studio, params }) =>
  json(await invoiceDetail(await getDb(), studio.id, params.invoiceId)),
);

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
