import { getDb } from "@/db/client";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { ENGINEERS_WRITE, MEMBERS_READ } from "@/lib/auth/policies";
import { catalogueOfStudio, checkView, listChecks, submitCheck } from "@/lib/catalogues/store";
import { pokeProcessRunner } from "@/lib/queue/poke";
import { submitCheckRequestSchema } from "@/lib/catalogues/api";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

type Params = { studioId: string; catalogueId: string };


export const GET = withAuth<typeof MEMBERS_READ, Params>(MEMBERS_READ, async ({ studio, params }) => {
  const db = await getDb();
  const catalogue = await catalogueOfStudio(db, studio.id, params.catalogueId);
  return json({ checks: await listChecks(db, catalogue) });
});

/** Runs a check: its pair sweep is submitted (balance and quote checks included) and queued like any sweep. */
export const POST = withAuth<typeof ENGINEERS_WRITE, Params>(ENGINEERS_WRITE, async ({ req, studio, user, params }) => {
  const input = await parseBody(req, submitCheckRequestSchema);
  const db = await getDb();
  const catalogue = await catalogueOfStudio(db, studio.id, params.catalogueId);
  const check = await submitCheck(db, studio.id, catalogue, { settings: input.settings, acceptedQuoteMs: input.acceptedQuoteMs, createdByUserId: user?.id ?? null });
  pokeProcessRunner();
  return json({ check: await checkView(db, catalogue, check) }, 201);
});

export const { PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET", "POST"]);
