import { getDb } from "@/db/client";
import { BILLING_READERS, withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { ledgerCsv, ledgerPage, parseLedgerQuery } from "@/lib/billing/queries";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// The studio's ledger: filter (kind, from, to), sort, page; format=csv returns every matching entry.
export const GET = withAuth(BILLING_READERS, async ({ req, studio }) => {
  const query = parseLedgerQuery(new URL(req.url));
  const page = await ledgerPage(await getDb(), studio.id, query);
  if (query.format === "csv")
    return new Response(ledgerCsv(page.entries), {
      headers: { "content-type": "text/csv; charset=utf-8", "content-disposition": `attachment; filename="ledger-${studio.id}.csv"`, "cache-control": "no-store" },
    });
  return json(page);
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
