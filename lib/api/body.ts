import "server-only";
import type { z } from "zod";
import { ApiError, type FieldIssue } from "@/lib/errors";

/** The `field` of an error about the request body as a whole (not JSON, not an object, wrong shape at the top). */
export const ROOT_FIELD = "body";

/** Largest JSON body any route accepts (bytes). */
export const MAX_JSON_BODY_BYTES = 64 * 1024;

function tooLarge(limit: number): ApiError {
  return new ApiError("payload_too_large", `Request body exceeds the limit of ${limit} bytes.`, ROOT_FIELD);
}

/**
 * Reads the body's bytes, stopping as soon as they pass the limit (never buffers an oversize body):
 * a declared Content-Length over the limit is refused before reading. `tooBig` makes the 413 the
 * caller's route speaks (a JSON body names `body`, an upload names `file`).
 */
export async function readBodyBytes(req: Request, limit: number, tooBig: () => ApiError): Promise<Buffer> {
  const declared = req.headers.get("content-length");
  if (declared !== null && Number(declared) > limit) throw tooBig();
  if (!req.body) return Buffer.alloc(0);
  const reader = req.body.getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.byteLength;
    if (total > limit) {
      await reader.cancel().catch(() => undefined);
      throw tooBig();
    }
    chunks.push(value);
  }
  return Buffer.concat(chunks);
}

/** Reads the body as text, stopping as soon as it passes the limit (never buffers an oversize body). */
export async function readBodyText(req: Request, limit = MAX_JSON_BODY_BYTES): Promise<string> {
  return (await readBodyBytes(req, limit, () => tooLarge(limit))).toString("utf8");
}

/**
 * Deepest nesting of arrays and objects a JSON body may have. Our deepest schema (a sweep spec)
 * nests 6 levels; 32 leaves room without letting one request make a scan do real work.
 */
export const MAX_JSON_DEPTH = 32;

/** A string holding a UTF-16 surrogate half without its partner (JSON's "\ud800" escapes make one). */
const LONE_SURROGATE = /[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;
export function hasLoneSurrogate(value: string): boolean {
  return LONE_SURROGATE.test(value);
}

interface Frame {
  value: unknown;
  parent: Frame | null;
  key: string;
  depth: number;
}

function framePath(frame: Frame | null, key?: string): string {
  const keys: string[] = key === undefined ? [] : [key];
  for (let f = frame; f && f.parent; f = f.parent) keys.push(f.key);
  return keys.reverse().join(".");
}

const printable = (key: string) => key.replaceAll("\u0000", "\\u0000").replace(/[\ud800-\udfff]/g, (c) => `\\u${c.charCodeAt(0).toString(16)}`);

/**
 * One pass over a parsed body without recursion (an explicit stack, so depth costs no call frames
 * and no path copies): refuses nesting past `maxDepth`, NUL characters (PostgreSQL text cannot
 * store them) and lone surrogates (they would be stored as U+FFFD, silently changing the text).
 * The path of an offending value is built only when one is found.
 */
export function checkJsonValue(root: unknown, maxDepth = MAX_JSON_DEPTH): void {
  const stack: Frame[] = [{ value: root, parent: null, key: "", depth: 0 }];
  while (stack.length > 0) {
    const frame = stack.pop()!;
    const { value } = frame;
    if (typeof value === "string") {
      if (value.includes("\u0000")) {
        const field = framePath(frame);
        throw new ApiError("validation_failed", `${field || "body"}: must not contain NUL (\\u0000) characters.`, field || ROOT_FIELD);
      }
      if (hasLoneSurrogate(value)) {
        const field = framePath(frame);
        throw new ApiError("invalid_text", `${field || "body"}: contains a lone UTF-16 surrogate (an unpaired \\ud800–\\udfff escape); send well-formed Unicode text.`, field || ROOT_FIELD);
      }
      continue;
    }
    if (value === null || typeof value !== "object") continue;
    if (frame.depth >= maxDepth) {
      const field = framePath(frame);
      throw new ApiError("payload_too_deep", `${field || "body"}: arrays and objects nest deeper than the limit of ${maxDepth} levels.`, field || ROOT_FIELD);
    }
    const depth = frame.depth + 1;
    if (Array.isArray(value)) {
      for (let i = value.length - 1; i >= 0; i--) stack.push({ value: value[i], parent: frame, key: String(i), depth });
      continue;
    }
    const keys = Object.keys(value);
    for (let i = keys.length - 1; i >= 0; i--) {
      const key = keys[i];
      if (key.includes("\u0000") || hasLoneSurrogate(key)) {
        const field = framePath(frame, printable(key));
        const what = key.includes("\u0000") ? "must not contain NUL (\\u0000) characters" : "contains a lone UTF-16 surrogate; send well-formed Unicode text";
        throw new ApiError(key.includes("\u0000") ? "validation_failed" : "invalid_text", `${field}: ${what}.`, field);
      }
      stack.push({ value: (value as Record<string, unknown>)[key], parent: frame, key, depth });
    }
  }
}

/**
 * A JSON body is only read from requests that say so. Browsers send text/plain, form and
 * multipart bodies cross-origin without asking; requiring application/json (which they must
 * ask for first) keeps a cookie-carrying page elsewhere from posting to the API. Calls with an
 * API token in the Authorization header carry no ambient credential and are not held to it.
 */
export function requireJsonContentType(req: Request): void {
  if (req.headers.get("authorization") !== null) return;
  const type = (req.headers.get("content-type") ?? "").split(";")[0].trim().toLowerCase();
  if (type !== "application/json")
    throw new ApiError("unsupported_media_type", `content-type: must be application/json${type ? `, not ${type}` : ""}.`, "content-type");
}

export async function readJson(req: Request, limit = MAX_JSON_BODY_BYTES): Promise<unknown> {
  requireJsonContentType(req);
  const text = await readBodyText(req, limit);
  if (text.trim() === "") throw new ApiError("invalid_json", "Request body must be a JSON object.", ROOT_FIELD);
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch {
    throw new ApiError("invalid_json", "Request body is not valid JSON.", ROOT_FIELD);
  }
  checkJsonValue(value);
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
