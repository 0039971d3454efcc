import "server-only";
import { ApiError, LimitError, type LimitDetail } from "@/lib/errors";

export interface ErrorBody {
  error: { code: string; message: string; field?: string; issues?: { field: string; message: string }[]; limit?: LimitDetail };
}

export function json(body: unknown, status = 200, headers?: HeadersInit): Response {
  const h = new Headers(headers);
  h.set("content-type", "application/json; charset=utf-8");
  h.set("cache-control", "no-store");
  return new Response(JSON.stringify(body), { status, headers: h });
}

export function errorResponse(error: ApiError): Response {
  const body: ErrorBody = { error: { code: error.code, message: error.message } };
  if (error.field !== undefined) body.error.field = error.field;
  if (error.issues?.length) body.error.issues = error.issues;
  if (error instanceof LimitError) body.error.limit = error.limit;
  return json(body, error.status, error.headers);
}

/** The one place that turns anything thrown by a handler into a JSON response. */
export function toErrorResponse(error: unknown): Response {
  if (error instanceof ApiError) return errorResponse(error);
  console.error("[api] unexpected error", error);
  return errorResponse(new ApiError("internal_error", "Something went wrong on our side."));
}
