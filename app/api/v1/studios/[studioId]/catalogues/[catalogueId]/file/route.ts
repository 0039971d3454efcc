import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { withAuth } from "@/lib/auth/guard";
import { MEMBERS_READ } from "@/lib/auth/policies";
import { catalogueOfStudio, catalogueUploadedFile } from "@/lib/catalogues/store";
import { ApiError } from "@/lib/errors";
import { fileDownload } from "@/lib/uploads/api";
import { fileOf } from "@/lib/uploads/versioned";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/**
 * The file exactly as uploaded (same bytes, same hash). When the table was corrected on the upload
 * page before saving, ?copy=saved answers the corrected CSV the objects were read from.
 */
export const GET = withAuth<typeof MEMBERS_READ, { studioId: string; catalogueId: string }>(MEMBERS_READ, async ({ req, studio, params }) => {
  const copy = new URL(req.url).searchParams.get("copy") ?? "uploaded";
  if (copy !== "uploaded" && copy !== "saved") throw new ApiError("validation_failed", 'copy: must be "uploaded" (the file as uploaded, the default) or "saved" (the table the objects were read from).', "copy");
  const catalogue = await catalogueOfStudio(await getDb(), studio.id, params.catalogueId);
  const file = copy === "saved" ? fileOf(catalogue) : catalogueUploadedFile(catalogue);
  const json = copy === "saved" ? catalogue.format === "json" : /\.json$/i.test(file.fileName) || (file.fileName === catalogue.fileName && catalogue.format === "json");
  return fileDownload(file, json ? "application/json" : "text/csv");
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
