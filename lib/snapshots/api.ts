/** Body reading of the snapshot routes (their policies are in lib/auth/policies.ts). */
import "server-only";
import { readBodyBytes } from "@/lib/api/body";
import type { UploadedFile } from "@/lib/api/multipart";
import { ApiError } from "@/lib/errors";
import { fileLimitText, readUploadForm } from "@/lib/uploads/api";
import { SNAPSHOT_LIMITS } from "./format";
import { snapshotUploads } from "./store";

/** The largest body an upload may send: the file limit plus room for multipart framing. */
export const MAX_SNAPSHOT_BODY_BYTES = SNAPSHOT_LIMITS.maxFileBytes + 16 * 1024;

/**
 * The uploaded file and its name: multipart/form-data (field "file", optional field "name"), or
 * the snapshot JSON itself as an application/json body (name from ?name= or the file's "name").
 */
export async function readSnapshotUpload(req: Request): Promise<{ name?: string; file: UploadedFile }> {
  const type = req.headers.get("content-type") ?? "";
  if (/^multipart\/form-data\s*;/i.test(type)) {
    const { fields, file } = await readUploadForm(req, snapshotUploads.kind, MAX_SNAPSHOT_BODY_BYTES, "the snapshot (JSON)");
    return { name: fields.get("name"), file };
  }
  if (!/^application\/json\b/i.test(type)) {
    throw new ApiError("unsupported_media_type", 'The body must be the snapshot JSON (content-type application/json) or multipart/form-data with the file in a field named "file".', "file");
  }
  const tooLarge = () => new ApiError("payload_too_large", `file: the upload exceeds the limit (${fileLimitText(snapshotUploads.kind)}).`, "file");
  const body = await readBodyBytes(req, SNAPSHOT_LIMITS.maxFileBytes, tooLarge);
  const name = new URL(req.url).searchParams.get("name") ?? undefined;
  return { name, file: { fileName: "snapshot.json", mediaType: "application/json", bytes: new Uint8Array(body) } };
}
