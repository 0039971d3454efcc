import { z } from "zod";
import { getDb } from "@/db/client";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { resolveSnapshotReference } from "@/lib/snapshots/store";
import { SWEEP_READ, SWEEP_WRITE, listSweeps, parseListQuery } from "@/lib/queue/api";
import { pokeProcessRunner } from "@/lib/queue/poke";
import { submitSweep } from "@/lib/queue/submit";
import { sweepView } from "@/lib/queue/views";
import { SPEC_LIMITS } from "@/lib/sweeps/parameters";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

const submitBody = z.strictObject({
  spec: z.unknown().optional(),
  name: z
    .string({ error: "name must be a string" })
    .trim()
    .min(1, { error: "name must not be empty" })
    .max(SPEC_LIMITS.maxNameLength, { error: `name must be at most ${SPEC_LIMITS.maxNameLength} characters` })
    .optional(),
  acceptedQuoteMs: z
    .number({ error: "acceptedQuoteMs must be an integer number of milliseconds" })
    .int({ error: "acceptedQuoteMs must be an integer number of milliseconds" })
    .min(0, { error: "acceptedQuoteMs must be ≥ 0" })
    .optional(),
});

export const GET = withAuth(SWEEP_READ, async ({ req, studio }) => {
  const query = parseListQuery(new URL(req.url));
  const db = await getDb();
  const { rows, total } = await listSweeps(db, studio.id, query);
  const list = [];
  for (const sweep of rows) list.push(await sweepView(db, sweep));
  return json({ sweeps: list, page: query.page, pageSize: query.pageSize, total });
});

export const POST = withAuth(SWEEP_WRITE, async ({ req, studio, user }) => {
  const input = await parseBody(req, submitBody);
  const db = await getDb();
  // A scene naming a stored snapshot gets its discs written in before the spec is checked and stored.
  const spec = await resolveSnapshotReference(db, studio.id, input.spec);
  const sweep = await submitSweep(db, studio.id, { spec, name: input.name, createdByUserId: user?.id ?? null, acceptedQuoteMs: input.acceptedQuoteMs });
  pokeProcessRunner();
  return json({ sweep: await sweepView(db, sweep) }, 201);
});

export const { PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET", "POST"]);
