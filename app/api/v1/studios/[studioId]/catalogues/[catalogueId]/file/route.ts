import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { withAuth } from "@/lib/auth/guard";
import { CATALOGUE_READ } from "@/lib/catalogues/api";
import { catalogueFileBytes, catalogueOfStudio } from "@/lib/catalogues/store";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/** The file exactly as uploaded (same bytes, same hash). */
export const GET = withAuth<typeof CATALOGUE_READ, { studioId: string; catalogueId: string }>(CATALOGUE_READ, async ({ studio, params }) => {
  const catalogue = await catalogueOfStudio(await getDb(), studio.id, params.catalogueId);
  const safeName = catalogue.fileName.replace(/[^A-Za-z0-9._ -]/g, "_");
  return new Response(Buffer.from(catalogueFileBytes(catalogue)), {
    status: 200,
    headers: {
      "content-type": catalogue.format === "json" ? "application/json" : "text/csv",
      "content-disposition": `attachment; filename="${safeName}"`,
      "x-content-sha256": catalogue.contentHash,
      etag: `"${catalogue.contentHash}"`,
      "cache-control": "no-store",
      "x-content-type-options": "nosniff",
    },
  });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
