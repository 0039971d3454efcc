import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { withAuth } from "@/lib/auth/guard";
import { CATALOGUE_READ } from "@/lib/catalogues/api";
import { checkExportJson, pairMatrixCsv, recommendationCsv } from "@/lib/catalogues/exports";
import { catalogueOfStudio, checkOfCatalogue, checkView } from "@/lib/catalogues/store";
import { ApiError } from "@/lib/errors";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/** ?format=json (everything) or csv with ?table=pairs (default) or recommendation. */
export const GET = withAuth<typeof CATALOGUE_READ, { studioId: string; catalogueId: string; checkId: string }>(CATALOGUE_READ, async ({ req, studio, params }) => {
  const url = new URL(req.url);
  const format = url.searchParams.get("format") ?? "json";
  const table = url.searchParams.get("table") ?? "pairs";
  if (format !== "json" && format !== "csv") throw new ApiError(400, "validation_failed", `format must be json or csv; got "${format}".`, "format");
  if (table !== "pairs" && table !== "recommendation") throw new ApiError(400, "validation_failed", `table must be pairs or recommendation; got "${table}".`, "table");
  const db = await getDb();
  const catalogue = await catalogueOfStudio(db, studio.id, params.catalogueId);
  const view = await checkView(db, catalogue, await checkOfCatalogue(db, catalogue, params.checkId));
  const body =
    format === "json"
      ? checkExportJson({ checkId: view.id, catalogue: { name: catalogue.name, version: catalogue.version, contentHash: catalogue.contentHash }, settings: view.settings, matrix: view.matrix, recommendation: view.recommendation })
      : table === "pairs"
        ? pairMatrixCsv(view.matrix)
        : recommendationCsv(view.settings, view.recommendation);
  const fileName = `${view.id}-${format === "json" ? "check.json" : `${table}.csv`}`;
  return new Response(body, {
    status: 200,
    headers: {
      "content-type": format === "json" ? "application/json; charset=utf-8" : "text/csv; charset=utf-8",
      "content-disposition": `attachment; filename="${fileName}"`,
      "cache-control": "no-store",
    },
  });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
