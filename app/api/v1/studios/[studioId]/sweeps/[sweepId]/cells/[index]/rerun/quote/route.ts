import { getDb } from "@/db/client";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { cellIndexParam, rerunQuoteRequestSchema, sweepOfStudio } from "@/lib/queue/api";
import { rerunPlan } from "@/lib/queue/rerun";
import { quoteSweep } from "@/lib/queue/submit";
import { ENGINEERS_WRITE } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/** The quote of re-running one cell at a finer dt: the same spec the rerun route submits; nothing starts. */
export const POST = withAuth<typeof ENGINEERS_WRITE, { studioId: string; sweepId: string; index: string }>(ENGINEERS_WRITE, async ({ req, studio, params }) => {
  const { dtFactor } = await parseBody(req, rerunQuoteRequestSchema);
  const db = await getDb();
  const sweep = await sweepOfStudio(db, studio.id, params.sweepId);
  const index = cellIndexParam(params.index, sweep);
  return json({ quote: await quoteSweep(db, studio.id, rerunPlan(sweep, index, dtFactor).spec) });
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
