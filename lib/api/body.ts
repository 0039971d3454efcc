import type { z } from "zod";
import { ApiError, type FieldIssue } from "@/lib/errors";

/** The `field` of an error about the request body as a whole (not JSON, not an object, wrong shape at the top). */
export const ROOT_FIELD = "body";

/** Largest JSON body any route accepts (bytes). */
export const MAX_JSON_BODY_BYTES = 64 * 1024;

function tooLarge(limit: number): ApiError {
  return new ApiError(413, "payload_too_large", `Request body exceeds the limit of ${limit} bytes.`);
}

/** Reads the body as text, stopping as soon as it passes the limit (never buffers an oversize body). */
export async function readBodyText(req: Request, limit = MAX_JSON_BODY_BYTES): Promise<string> {
  const declared = req.headers.get("content-length");
  if (declared !== null && Number(declared) > limit) throw tooLarge(limit);
  if (!req.body) return "";
  const reader = req.body.getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.byteLength;
    if (total > limit) {
      await reader.cancel().catch(() => undefined);
      throw tooLarge(limit);
    }
    chunks.push(value);
  }
  return Buffer.concat(chunks).toString("utf8");
}

/** The dotted path of the first string (value or key) holding a NUL character, which PostgreSQL text cannot store. */
function findNul(value: unknown, path: string[] = []): string[] | null {
  if (typeof value === "string") return value.includes("\u0000") ? path : null;
  if (Array.isArray(value)) {
    for (let i = 0; i < value.length; i++) {
      const found = findNul(value[i], [...path, String(i)]);
      if (found) return found;
    }
    return null;
  }
  if (value && typeof value === "object") {
    for (const [key, inner] of Object.entries(value)) {
      if (key.includes("\u0000")) return [...path, key.replaceAll("\u0000", "\\u0000")];
      const found = findNul(inner, [...path, key]);
      if (found) return found;
    }
  }
  return null;
}

export async function readJson(req: Request, limit = MAX_JSON_BODY_BYTES): Promise<unknown> {
  const text = await readBodyText(req, limit);
  if (text.trim() === "") throw new ApiError(400, "invalid_json", "Request body must be a JSON object.", ROOT_FIELD);
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch {
    throw new ApiError(400, "invalid_json", "Request body is not valid JSON.", ROOT_FIELD);
  }
  const nulAt = findNul(value);
  if (nulAt) {
    const field = nulAt.join(".");
    throw new ApiError(400, "validation_failed", `${field || ROOT_FIELD}: must not contain NUL (\\u0000) characters.`, field || ROOT_FIELD);
  }
  return value;
}

function issueField(issue: z.core.$ZodIssue): string {
  const path = issue.path.map(String);
  if (issue.code === "unrecognized_keys" && issue.keys.length > 0) path.push(issue.keys[0]);
  return path.join(".");
}

/** Maps a zod error to our 400: `field` is the dotted path of the first issue, `issues` lists all. */
export function validationError(error: z.ZodError): ApiError {
  const issues: FieldIssue[] = error.issues.flatMap((issue) => {
    if (issue.code === "unrecognized_keys") {
      const base = issue.path.map(String);
      return issue.keys.map((key) => ({
        field: [...base, key].join("."),
        message: `Unknown field "${[...base, key].join(".")}".`,
      }));
    }
    return [{ field: issueField(issue) || ROOT_FIELD, message: issue.message }];
  });
  const first = error.issues[0];
  const unknown = first?.code === "unrecognized_keys";
  return new ApiError(
    400,
    unknown ? "unknown_field" : "validation_failed",
    issues[0]?.field ? `${issues[0].field}: ${issues[0].message}` : `${ROOT_FIELD}: ${issues[0]?.message ?? "invalid request"}`,
    issues[0]?.field || ROOT_FIELD,
    issues,
  );
}

export function parseWith<S extends z.ZodType>(schema: S, value: unknown): z.infer<S> {
  const result = schema.safeParse(value);
  if (!result.success) throw validationError(result.error);
  return result.data;
}

/** Reads, size-limits and validates a JSON body against a (strict) zod schema. */
export async function parseBody<S extends z.ZodType>(req: Request, schema: S): Promise<z.infer<S>> {
  return parseWith(schema, await readJson(req));
}
