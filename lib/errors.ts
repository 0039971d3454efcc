/**
 * Typed errors that route handlers and lib/ functions throw; lib/api/respond.ts maps them to
 * `{ error: { code, message, field? } }` with the status given here.
 */
export type ErrorCode =
  | "invalid_json"
  | "validation_failed"
  | "unknown_field"
  | "payload_too_large"
  | "payload_too_deep"
  | "unsupported_media_type"
  | "invalid_text"
  | "cross_origin"
  | "rate_limited"
  | "unauthenticated"
  | "invalid_token"
  | "forbidden"
  | "insufficient_scope"
  | "token_not_allowed"
  | "not_found"
  | "method_not_allowed"
  | "already_member"
  | "last_owner"
  | "invite_email_mismatch"
  | "invite_expired"
  | "invite_used"
  | "reset_token_invalid"
  | "reset_token_expired"
  | "reset_token_used"
  | "studio_suspended"
  | "invalid_spec"
  | "invalid_catalogue"
  | "invalid_snapshot"
  | "invalid_settings"
  | "insufficient_minutes"
  | "invalid_state"
  | "quote_changed"
  | "not_ready"
  | "invalid_signature"
  | "unknown_event_type"
  | "billing_unavailable"
  | "payment_provider_error"
  | "quota_exceeded"
  | "internal_error";

export interface FieldIssue {
  field: string;
  message: string;
}

export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: ErrorCode,
    message: string,
    readonly field?: string,
    readonly issues?: FieldIssue[],
    readonly headers?: Record<string, string>,
  ) {
    super(message);
    this.name = "ApiError";
  }
}

export const notFound = (what = "Resource") => new ApiError(404, "not_found", `${what} not found.`);

/** Which limit a request ran into, as the error body names it (`error.limit`). */
export interface LimitDetail {
  /** The quota's name, as in lib/quotas/plan.ts (e.g. "maxCellsPerSweep", "monthlyComputeMs"). */
  name: string;
  /** The studio's value of that limit. */
  value: number;
  /** What the request asked for. */
  requested: number;
  /** What is left of the limit now (never negative). */
  remaining: number;
  unit: string;
}

/** An ApiError raised by a quota: the response also carries `error.limit`. */
export class LimitError extends ApiError {
  constructor(
    status: number,
    code: ErrorCode,
    message: string,
    readonly limit: LimitDetail,
    field?: string,
  ) {
    super(status, code, message, field);
    this.name = "LimitError";
  }
}
