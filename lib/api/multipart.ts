import "server-only";
import { ApiError } from "@/lib/errors";
import { readBodyBytes } from "./body";

export interface UploadedFile {
  fileName: string;
  mediaType: string;
  bytes: Uint8Array;
}

/**
 * Reads a multipart/form-data body of at most `limit` bytes (never buffers more) and returns its
 * text fields and its first file field. A body over the limit is a 413 naming the limit.
 */
export async function readMultipart(req: Request, limit: number, fileLimitText: string): Promise<{ fields: Map<string, string>; file: UploadedFile | null; files: Map<string, UploadedFile> }> {
  const type = req.headers.get("content-type") ?? "";
  if (!/^multipart\/form-data\s*;/i.test(type)) {
    throw new ApiError("unsupported_media_type", 'The body must be multipart/form-data with the file in a field named "file" (curl -F file=@catalogue.csv).', "file");
  }
  const tooLarge = () => new ApiError("payload_too_large", `file: the upload exceeds the limit (${fileLimitText}).`, "file");
  const body = await readBodyBytes(req, limit, tooLarge);
  let form: FormData;
  try {
    form = await new Response(new Uint8Array(body), { headers: { "content-type": type } }).formData();
  } catch {
    throw new ApiError("validation_failed", "The multipart body could not be read.", "file");
  }
  const fields = new Map<string, string>();
  // The first file of each field name; "file" is the one every upload route reads.
  const files = new Map<string, UploadedFile>();
  for (const [key, value] of form.entries()) {
    if (typeof value === "string") {
      if (!fields.has(key)) fields.set(key, value);
    } else if (!files.has(key)) {
      files.set(key, { fileName: value.name || "catalogue", mediaType: value.type, bytes: new Uint8Array(await value.arrayBuffer()) });
    }
  }
  return { fields, file: files.get("file") ?? null, files };
}
