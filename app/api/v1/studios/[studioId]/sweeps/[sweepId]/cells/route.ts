import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { ApiError } from "@/lib/errors";
import { SWEEP_READ, sweepOfStudio } from "@/lib/queue/api";
import { cellJson, storedCells } from "@/lib/queue/views";
import { expandAxes } from "@/lib/sweeps/grid";
import { cellToCsv, csvHeader } from "@/lib/sweeps/results";
import type { SweepSpec } from "@/lib/sweeps/spec";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth<typeof SWEEP_READ, { studioId: string; sweepId: string }>(SWEEP_READ, async ({ req, studio, params }) => {
  const format = new URL(req.url).searchParams.get("format") ?? "json";
  if (format !== "json" && format !== "csv") throw new ApiError(400, "validation_failed", `format must be json or csv; got "${format}".`, "format");
  const db = await getDb();
  const sweep = await sweepOfStudio(db, studio.id, params.sweepId);
  const cells = await storedCells(db, sweep);
  if (format === "json") return json({ cells: cells.map(cellJson) });
  // The done cells so far, in index order, with the results serialiser's escaping and row format.
  const text = `${csvHeader(expandAxes(sweep.spec as SweepSpec))}\r\n${cells.map((cell) => `${cellToCsv(cell)}\r\n`).join("")}`;
  return new Response(text, {
    status: 200,
    headers: {
      "content-type": "text/csv; charset=utf-8",
      "content-disposition": `attachment; filename="${sweep.id}-cells.csv"`,
      "cache-control": "no-store",
    },
  });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
