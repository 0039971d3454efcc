import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { withAuth } from "@/lib/auth/guard";
import { MEMBERS_READ } from "@/lib/auth/policies";
import { GameSettingsError, gameSettings, pairContactCsv } from "@/lib/catalogues/contact-tuning";
import { checkExportJson, frictionCsv, pairMatrixCsv, recommendationCsv } from "@/lib/catalogues/exports";
import { catalogueOfStudio, checkOfCatalogue, checkView } from "@/lib/catalogues/store";
import { ApiError } from "@/lib/errors";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/**
 * ?format=json (everything), csv with ?table=pairs (default), recommendation, contacts or friction
 * (catalogues whose objects give μ or μ_r), or
 * game-settings with ?stiffness=checked (default) or recommended (docs/game-settings.md).
 */
export const GET = withAuth<typeof MEMBERS_READ, { studioId: string; catalogueId: string; checkId: string }>(MEMBERS_READ, async ({ req, studio, params }) => {
  const url = new URL(req.url);
  const format = url.searchParams.get("format") ?? "json";
  const table = url.searchParams.get("table") ?? "pairs";
  const stiffness = url.searchParams.get("stiffness") ?? "checked";
  if (format !== "json" && format !== "csv" && format !== "game-settings") throw new ApiError("validation_failed", `format must be json, csv or game-settings; got "${format}".`, "format");
  if (table !== "pairs" && table !== "recommendation" && table !== "contacts" && table !== "friction") throw new ApiError("validation_failed", `table must be pairs, recommendation, contacts or friction; got "${table}".`, "table");
  if (stiffness !== "checked" && stiffness !== "recommended") throw new ApiError("validation_failed", `stiffness must be checked or recommended; got "${stiffness}".`, "stiffness");
  const db = await getDb();
  const catalogue = await catalogueOfStudio(db, studio.id, params.catalogueId);
  const view = await checkView(db, catalogue, await checkOfCatalogue(db, catalogue, params.checkId));
  const friction = format === "csv" && table === "friction" ? frictionCsv(view.recommendation) : null;
  if (format === "csv" && table === "friction" && friction === null) {
    throw new ApiError("invalid_value", "table=friction: no object of this catalogue gives a friction coefficient or rolling resistance (add a friction column and check again).", "table");
  }
  if (format === "game-settings") {
    let document;
    try {
      document = gameSettings({
        checkId: view.id,
        catalogue: { name: catalogue.name, version: catalogue.version },
        objects: view.objects,
        settings: view.settings,
        recommendation: view.recommendation,
        worstVerdicts: new Map(view.matrix.pairs.map((pair) => [pair.name, pair.worstVerdict])),
        stiffness,
      });
    } catch (error) {
      if (error instanceof GameSettingsError) throw new ApiError("invalid_value", error.message, error.field);
      throw error;
    }
    return new Response(`${JSON.stringify(document, null, 2)}\n`, {
      status: 200,
      headers: { "content-type": "application/json; charset=utf-8", "content-disposition": `attachment; filename="${view.id}-game-settings.json"`, "cache-control": "no-store" },
    });
  }
  const body =
    format === "json"
      ? checkExportJson({ checkId: view.id, catalogue: { name: catalogue.name, version: catalogue.version, contentHash: catalogue.contentHash }, settings: view.settings, matrix: view.matrix, recommendation: view.recommendation, contacts: view.contacts })
      : table === "pairs"
        ? pairMatrixCsv(view.matrix)
        : table === "contacts"
          ? pairContactCsv(view.contacts)
          : table === "friction"
            ? (friction as string)
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
