import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { BILLING_READERS } from "@/lib/auth/policies";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { ledgerPage, parseLedgerQuery } from "@/lib/billing/queries";
import { ledgerExport } from "@/lib/ledger/statement";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// The studio's ledger: filter (kind, from, to), sort, page; format=csv returns every matching entry,
// as …/ledger/export does (its columns name the machine and the displayed units).
export const GET = withAuth(BILLING_READERS, async ({ req, studio }) => {
  const query = parseLedgerQuery(new URL(req.url));
  const db = await getDb();
  if (query.format === "csv") {
    const file = await ledgerExport(db, studio.id, { kind: query.kind, from: query.from, to: query.to, format: "csv", group: "entry" });
    return new Response(file.body, { headers: { "content-type": file.contentType, "content-disposition": `attachment; filename="${file.filename}"`, "cache-control": "no-store" } });
  }
  return json(await ledgerPage(db, studio.id, query));
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
