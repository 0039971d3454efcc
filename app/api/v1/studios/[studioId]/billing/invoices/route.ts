import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { BILLING_READERS } from "@/lib/auth/policies";
import { parseWith } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { invoicesCsv, invoicesQuerySchema, listInvoices } from "@/lib/billing/queries";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// The studio's invoices, newest period first; format=csv for a bookkeeping import (integer cents and a formatted amount).
export const GET = withAuth(BILLING_READERS, async ({ req, studio }) => {
  const query = parseWith(invoicesQuerySchema, Object.fromEntries(new URL(req.url).searchParams));
  const list = await listInvoices(await getDb(), studio.id);
  if (query.format === "csv")
    return new Response(invoicesCsv(list), {
      headers: { "content-type": "text/csv; charset=utf-8", "content-disposition": `attachment; filename="invoices-${studio.id}.csv"`, "cache-control": "no-store" },
    });
  return json({ invoices: list });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
