import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { BILLING_READERS } from "@/lib/auth/policies";
import { otherMethods } from "@/lib/api/methods";
import { ledgerExport, parseLedgerExportQuery } from "@/lib/ledger/statement";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// The ledger as a file (CSV or JSON), every entry or one row per sweep; columns name their units.
export const GET = withAuth(BILLING_READERS, async ({ req, studio }) => {
  const file = await ledgerExport(await getDb(), studio.id, parseLedgerExportQuery(new URL(req.url)));
  return new Response(file.body, { headers: { "content-type": file.contentType, "content-disposition": `attachment; filename="${file.filename}"`, "cache-control": "no-store" } });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
