import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { withAuth } from "@/lib/auth/guard";
import { ApiError } from "@/lib/errors";
import { CURSOR_HEADER, cursorParam, sweepOfStudio } from "@/lib/queue/api";
import { cellsStream, resultsCursor } from "@/lib/queue/views";
import { MEMBERS_READ } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth<typeof MEMBERS_READ, { studioId: string; sweepId: string }>(MEMBERS_READ, async ({ req, studio, params }) => {
  const url = new URL(req.url);
  const format = url.searchParams.get("format") ?? "json";
  if (format !== "json" && format !== "csv") throw new ApiError("validation_failed", `format must be json or csv; got "${format}".`, "format");
  const after = cursorParam(url);
  const contactRaw = url.searchParams.get("contact") ?? "false";
  if (contactRaw !== "true" && contactRaw !== "false") throw new ApiError("validation_failed", `contact must be true or false; got "${contactRaw}".`, "contact");
  const db = await getDb();
  const sweep = await sweepOfStudio(db, studio.id, params.sweepId);
  // The cursor is read before any row: every row written up to it is committed by then, and a row
  // written while the body streams gets a larger one, so `after=<cursor>` next time misses nothing.
  const cursor = await resultsCursor(db, sweep.id);
  // The done cells (with `after`: of the rows changed after it, up to the cursor), in index order,
  // streamed chunk by chunk from the packed results. Without `after` the body is the whole export,
  // the same bytes for the same spec on any run, so the cursor travels in the header only.
  const body = cellsStream(db, sweep, format, after === null ? undefined : { after, upTo: cursor }, { contact: contactRaw === "true" });
  const headers: Record<string, string> = { "cache-control": "no-store", [CURSOR_HEADER]: String(cursor) };
  if (format === "json") return new Response(body, { status: 200, headers: { "content-type": "application/json; charset=utf-8", ...headers } });
  return new Response(body, {
    status: 200,
    headers: { "content-type": "text/csv; charset=utf-8", "content-disposition": `attachment; filename="${sweep.id}-cells.csv"`, ...headers },
  });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
