import "server-only";

/**
 * Typed errors that route handlers and lib/ functions throw; lib/api/respond.ts maps them to
 * `{ error: { code, message, field? } }` with the status given here.
 */
/**
 * Every error code with its HTTP status, in one table: a throw site names the code, never the
 * status, so one code always answers with one status (docs/api.md § Errors lists the same table).
 */
export const ERROR_STATUS = {
  invalid_json: 400,
  validation_failed: 400,
  unknown_field: 400,
  payload_too_deep: 400,
  invalid_settings: 400,
  invalid_signature: 400,
  unknown_event_type: 400,
  reset_token_invalid: 400,
  unauthenticated: 401,
  invalid_token: 401,
  insufficient_minutes: 402,
  forbidden: 403,
  insufficient_scope: 403,
  token_not_allowed: 403,
  cross_origin: 403,
  invite_email_mismatch: 403,
  not_found: 404,
  method_not_allowed: 405,
  already_member: 409,
  last_owner: 409,
  studio_suspended: 409,
  invalid_state: 409,
  quote_changed: 409,
  invite_expired: 410,
  invite_used: 410,
  reset_token_expired: 410,
  reset_token_used: 410,
  payload_too_large: 413,
  unsupported_media_type: 415,
  /** Well-formed, but the value cannot be used here (a revoke beyond the balance, a retry of a row that has nothing to retry). */
  invalid_value: 422,
  invalid_text: 422,
  invalid_spec: 422,
  invalid_catalogue: 422,
  invalid_snapshot: 422,
  quota_exceeded: 422,
  rate_limited: 429,
  internal_error: 500,
  payment_provider_error: 502,
  billing_unavailable: 503,
  not_ready: 503,
} as const satisfies Record<string, number>;

export type ErrorCode = keyof typeof ERROR_STATUS;

export interface FieldIssue {
  field: string;
  message: string;
}

export class ApiError extends Error {
  /** From ERROR_STATUS: the code decides the status. */
  readonly status: number;

  constructor(
    readonly code: ErrorCode,
    message: string,
    readonly field?: string,
    readonly issues?: FieldIssue[],
    readonly headers?: Record<string, string>,
  ) {
    super(message);
    this.status = ERROR_STATUS[code];
    this.name = "ApiError";
  }
}

export const notFound = (what = "Resource") => new ApiError("not_found", `${what} not found.`);

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
    code: ErrorCode,
    message: string,
    readonly limit: LimitDetail,
    field?: string,
  ) {
    super(code, message, field);
    this.name = "LimitError";
  }
}
