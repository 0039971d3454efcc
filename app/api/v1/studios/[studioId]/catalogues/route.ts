import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { MAX_UPLOAD_BODY_BYTES } from "@/lib/catalogues/api";
import { ENGINEERS_WRITE, MEMBERS_READ } from "@/lib/auth/policies";
import { CATALOGUE_LIMITS } from "@/lib/catalogues/format";
import { catalogueDetail, catalogueUploads, listCatalogues, saveCatalogue } from "@/lib/catalogues/store";
import { readUploadForm } from "@/lib/uploads/api";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth(MEMBERS_READ, async ({ studio }) => {
  return json({ catalogues: await listCatalogues(await getDb(), studio.id), limits: CATALOGUE_LIMITS });
});

export const POST = withAuth(ENGINEERS_WRITE, async ({ req, studio, user }) => {
  const { fields, file, files } = await readUploadForm(req, catalogueUploads.kind, MAX_UPLOAD_BODY_BYTES, "the catalogue (CSV or JSON)");
  const db = await getDb();
  const { catalogue, notes } = await saveCatalogue(db, studio.id, {
    name: fields.get("name"),
    fileName: file.fileName,
    mediaType: file.mediaType,
    bytes: file.bytes,
    // A table corrected on the upload page: "file" is the corrected CSV, "original" the file as the user chose it.
    original: files.get("original") ?? null,
    createdByUserId: user?.id ?? null,
  });
  return json({ catalogue: { ...(await catalogueDetail(db, catalogue)), notes } }, 201);
});

export const { PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET", "POST"]);
