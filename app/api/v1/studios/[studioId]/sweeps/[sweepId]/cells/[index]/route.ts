import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { simulate } from "@/lib/physics";
import { SWEEP_READ, cellIndexParam, sweepOfStudio } from "@/lib/queue/api";
import { storedCells } from "@/lib/queue/views";
import { cellAt, expandAxes } from "@/lib/sweeps/grid";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/** Samples of the recomputed time series (the engine's cap for drawing). */
const SERIES_SAMPLES = 2000;

export const GET = withAuth<typeof SWEEP_READ, { studioId: string; sweepId: string; index: string }>(SWEEP_READ, async ({ studio, params }) => {
  const db = await getDb();
  const sweep = await sweepOfStudio(db, studio.id, params.sweepId);
  const index = cellIndexParam(params.index, sweep);
  const spec = sweep.spec;
  const cell = cellAt(spec, expandAxes(spec), index);
  const [stored] = await storedCells(db, sweep, index);
  // The series is not stored: the engine is deterministic, so running the cell again gives it exactly.
  const run = simulate(cell.scenario, { maxSamples: SERIES_SAMPLES });
  return json({
    cell: {
      index,
      axisValues: cell.axisValues,
      scenario: cell.scenario,
      metrics: stored?.metrics ?? null,
      verdict: stored?.verdict ?? null,
      reason: stored?.reason ?? null,
    },
    series: run.series,
  });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
