/**
 * The route plumbing every kind of versioned upload shares (lib/uploads/versioned.ts is the store):
 * reading the upload form with the kind's size limit, and answering a stored file as a download.
 */
import "server-only";
import { readMultipart, type UploadedFile } from "@/lib/api/multipart";
import { ApiError } from "@/lib/errors";
import type { UploadKind, VersionedTable } from "./versioned";

/** The per-file limit as the multipart reader states it: "262,144 bytes (256 KiB) per file". */
export function fileLimitText(kind: Pick<UploadKind<VersionedTable>, "maxFileBytes" | "maxFileText">): string {
  return `${kind.maxFileBytes.toLocaleString("en-US")} bytes (${kind.maxFileText}) per file`;
}

/**
 * A multipart/form-data upload: the file in the field "file" (`what` says what it should be: "the
 * catalogue (CSV or JSON)"), other files and text fields beside it; at most `maxBodyBytes` in all.
 */
export async function readUploadForm(
  req: Request,
  kind: Pick<UploadKind<VersionedTable>, "maxFileBytes" | "maxFileText">,
  maxBodyBytes: number,
  what: string,
): Promise<{ fields: Map<string, string>; file: UploadedFile; files: Map<string, UploadedFile> }> {
  const { fields, file, files } = await readMultipart(req, maxBodyBytes, fileLimitText(kind));
  if (!file) throw new ApiError("validation_failed", `file: attach ${what} in a field named "file".`, "file");
  return { fields, file, files };
}

/** A stored file as a download: the same bytes, their SHA-256 as header and ETag, never cached, never sniffed. */
export function fileDownload(file: { fileName: string; bytes: Uint8Array; contentHash: string }, contentType: string): Response {
  const safeName = file.fileName.replace(/[^A-Za-z0-9._ -]/g, "_");
  return new Response(Buffer.from(file.bytes), {
    status: 200,
    headers: {
      "content-type": contentType,
      "content-disposition": `attachment; filename="${safeName}"`,
      "x-content-sha256": file.contentHash,
      etag: `"${file.contentHash}"`,
      "cache-control": "no-store",
      "x-content-type-options": "nosniff",
    },
  });
}
