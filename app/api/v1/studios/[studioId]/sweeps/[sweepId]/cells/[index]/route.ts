import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { simulate } from "@/lib/physics";
import { cellIndexParam, sweepOfStudio } from "@/lib/queue/api";
import { cellSummary } from "@/lib/queue/views";
import { MEMBERS_READ } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/** Samples of the recomputed time series (the engine's cap for drawing). */
const SERIES_SAMPLES = 2000;

export const GET = withAuth<typeof MEMBERS_READ, { studioId: string; sweepId: string; index: string }>(MEMBERS_READ, async ({ studio, params }) => {
  const db = await getDb();
  const sweep = await sweepOfStudio(db, studio.id, params.sweepId);
  const cell = await cellSummary(db, sweep, cellIndexParam(params.index, sweep));
  // The series is not stored: the engine is deterministic, so running the cell again gives it exactly.
  const run = simulate(cell.scenario, { maxSamples: SERIES_SAMPLES });
  return json({ cell, series: run.series });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
