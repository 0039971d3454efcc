/**
 * Typed errors that route handlers and lib/ functions throw; lib/api/respond.ts maps them to
 * `{ error: { code, message, field? } }` with the status given here.
 */
export type ErrorCode =
  | "invalid_json"
  | "validation_failed"
  | "unknown_field"
  | "payload_too_large"
  | "unauthenticated"
  | "invalid_token"
  | "forbidden"
  | "insufficient_scope"
  | "token_not_allowed"
  | "not_found"
  | "method_not_allowed"
  | "email_taken"
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
