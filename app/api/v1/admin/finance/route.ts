import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { parseWith } from "@/lib/api/body";
import { financeView } from "@/lib/billing/finance-ops";
import { financeQuerySchema, reconciliationByMonth, reconciliationCsv } from "@/lib/billing/reconciliation-export";
import { PLATFORM_ADMIN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// format=csv: the reconciliation per studio and month, machine and displayed units in named columns.
export const GET = withAuth(PLATFORM_ADMIN, async ({ req }) => {
  const query = parseWith(financeQuerySchema, Object.fromEntries(new URL(req.url).searchParams));
  const view = await financeView(await getDb());
  if (query.format === "csv")
    return new Response(reconciliationCsv(reconciliationByMonth(view.periods)), {
      headers: { "content-type": "text/csv; charset=utf-8", "content-disposition": 'attachment; filename="reconciliation.csv"', "cache-control": "no-store" },
    });
  return json(view);
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
