import { getDb } from "@/db/client";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { resolveSnapshotReference } from "@/lib/snapshots/store";
import { parseListQuery, submitSweepRequestSchema, sweepsListPage } from "@/lib/queue/api";
import { pokeProcessRunner } from "@/lib/queue/poke";
import { submitSweep } from "@/lib/queue/submit";
import { sweepView } from "@/lib/queue/views";
import { ENGINEERS_WRITE, MEMBERS_READ } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth(MEMBERS_READ, async ({ req, studio }) => {
  const query = parseListQuery(new URL(req.url));
  return json(await sweepsListPage(await getDb(), studio.id, query));
});

export const POST = withAuth(ENGINEERS_WRITE, async ({ req, studio, user }) => {
  const input = await parseBody(req, submitSweepRequestSchema);
  const db = await getDb();
  // A scene naming a stored snapshot gets its discs written in before the spec is checked and stored.
  const spec = await resolveSnapshotReference(db, studio.id, input.spec);
  const sweep = await submitSweep(db, studio.id, { spec, name: input.name, createdByUserId: user?.id ?? null, acceptedQuoteMs: input.acceptedQuoteMs });
  pokeProcessRunner();
  return json({ sweep: await sweepView(db, sweep) }, 201);
});

export const { PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET", "POST"]);
