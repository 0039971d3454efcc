import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { withAuth } from "@/lib/auth/guard";
import { ApiError } from "@/lib/errors";
import { SWEEP_READ, sweepOfStudio } from "@/lib/queue/api";
import { cellsStream } from "@/lib/queue/views";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth<typeof SWEEP_READ, { studioId: string; sweepId: string }>(SWEEP_READ, async ({ req, studio, params }) => {
  const format = new URL(req.url).searchParams.get("format") ?? "json";
  if (format !== "json" && format !== "csv") throw new ApiError(400, "validation_failed", `format must be json or csv; got "${format}".`, "format");
  const db = await getDb();
  const sweep = await sweepOfStudio(db, studio.id, params.sweepId);
  // The done cells so far, in index order, streamed chunk by chunk from the packed results.
  const body = cellsStream(db, sweep, format);
  if (format === "json") return new Response(body, { status: 200, headers: { "content-type": "application/json; charset=utf-8", "cache-control": "no-store" } });
  return new Response(body, {
    status: 200,
    headers: {
      "content-type": "text/csv; charset=utf-8",
      "content-disposition": `attachment; filename="${sweep.id}-cells.csv"`,
      "cache-control": "no-store",
    },
  });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
