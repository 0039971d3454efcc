import { getDb } from "@/db/client";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { resolveSnapshotReference } from "@/lib/snapshots/store";
import { quoteRequestSchema } from "@/lib/queue/api";
import { quoteSweep } from "@/lib/queue/submit";
import { ENGINEERS_WRITE } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const POST = withAuth(ENGINEERS_WRITE, async ({ req, studio }) => {
  const { spec } = await parseBody(req, quoteRequestSchema);
  const db = await getDb();
  return json({ quote: await quoteSweep(db, studio.id, await resolveSnapshotReference(db, studio.id, spec)) });
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
