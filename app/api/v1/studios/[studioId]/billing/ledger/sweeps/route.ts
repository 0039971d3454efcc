import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { BILLING_READERS } from "@/lib/auth/policies";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { ledgerGroupsPage, parseLedgerGroupsQuery } from "@/lib/ledger/statement";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// The ledger grouped by sweep: one row per sweep's usage, every other entry on its own.
export const GET = withAuth(BILLING_READERS, async ({ req, studio }) => json(await ledgerGroupsPage(await getDb(), studio.id, parseLedgerGroupsQuery(new URL(req.url)))));

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
