import { getDb } from "@/db/client";
import { parseWith, readBodyText } from "@/lib/api/body";
import { ApiError } from "@/lib/errors";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { cellIndexParam, sweepOfStudio } from "@/lib/queue/api";
import { pokeProcessRunner } from "@/lib/queue/poke";
import { submitSweep } from "@/lib/queue/submit";
import { sweepView } from "@/lib/queue/views";
import { rerunPlan } from "@/lib/queue/rerun";
import { rerunRequestSchema } from "@/lib/queue/api";
import { ENGINEERS_WRITE } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";


/** The body is optional here: none (or blank) means the defaults. */
async function readOptionalJson(req: Request): Promise<unknown> {
  const text = await readBodyText(req);
  if (text.trim() === "") return {};
  try {
    return JSON.parse(text) as unknown;
  } catch {
    throw new ApiError("invalid_json", "Request body is not valid JSON.");
  }
}

export const POST = withAuth<typeof ENGINEERS_WRITE, { studioId: string; sweepId: string; index: string }>(ENGINEERS_WRITE, async ({ req, studio, params, user }) => {
  const { dtFactor, acceptedQuoteMs } = parseWith(rerunRequestSchema, await readOptionalJson(req));
  const db = await getDb();
  const sweep = await sweepOfStudio(db, studio.id, params.sweepId);
  const index = cellIndexParam(params.index, sweep);
  const plan = rerunPlan(sweep, index, dtFactor);
  const rerun = await submitSweep(db, studio.id, { spec: plan.spec, name: plan.name, createdByUserId: user?.id ?? null, acceptedQuoteMs, rerunOf: plan.rerunOf });
  pokeProcessRunner();
  return json({ sweep: await sweepView(db, rerun) }, 201);
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
