import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { BILLING_READERS } from "@/lib/auth/policies";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { sweepLedgerChunks } from "@/lib/ledger/statement";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// The chunk detail of one sweep's ledger row.
export const GET = withAuth<typeof BILLING_READERS, { studioId: string; sweepId: string }>(BILLING_READERS, async ({ studio, params }) =>
  json(await sweepLedgerChunks(await getDb(), studio.id, params.sweepId)),
);

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
