import "server-only";

/**
 * Stripe's error envelope `{ error: { type, code?, message, param?, decline_code? } }` and its status codes.
 * `saveForIdempotency` follows Stripe's rule that a result is kept for an idempotency key only once the
 * endpoint has started executing: validation failures (400) and missing resources (404) are not kept.
 */
export type StripeErrorType = "invalid_request_error" | "card_error" | "idempotency_error" | "api_error";

export interface StripeErrorBody {
  type: StripeErrorType;
  message: string;
  code?: string;
  param?: string;
  decline_code?: string;
  doc_url?: string;
  payment_intent?: unknown;
}

export class StripeFakeError extends Error {
  readonly status: number;
  readonly body: StripeErrorBody;
  readonly saveForIdempotency: boolean;

  constructor(status: number, body: StripeErrorBody, saveForIdempotency = status === 402) {
    super(body.message);
    this.status = status;
    this.body = body;
    this.saveForIdempotency = saveForIdempotency;
  }
}

function withDocUrl(body: StripeErrorBody): StripeErrorBody {
  return body.code ? { ...body, doc_url: `https://stripe.com/docs/error-codes/${body.code.replace(/_/g, "-")}` } : body;
}

export function invalidRequest(message: string, param?: string, code?: string): StripeFakeError {
  return new StripeFakeError(400, withDocUrl({ type: "invalid_request_error", message, ...(code ? { code } : {}), ...(param ? { param } : {}) }));
}

export function missingParam(param: string): StripeFakeError {
  return invalidRequest(`Missing required param: ${param}.`, param, "parameter_missing");
}

export function unknownParam(param: string): StripeFakeError {
  return invalidRequest(`Received unknown parameter: ${param}`, param, "parameter_unknown");
}

/** An invalid value for a named parameter; Stripe gives most of these no `code`, only the message and `param`. */
export function invalidParam(param: string, message: string, code?: string): StripeFakeError {
  return invalidRequest(message, param, code);
}

/** Object names as Stripe prints them in "No such …" messages. */
export function resourceMissing(objectLabel: string, id: string, param = "id"): StripeFakeError {
  return new StripeFakeError(
    404,
    withDocUrl({ type: "invalid_request_error", code: "resource_missing", message: `No such ${objectLabel}: '${id}'`, param }),
  );
}

export function cardDeclined(declineCode: string, message: string, paymentIntent?: unknown): StripeFakeError {
  return new StripeFakeError(
    402,
    withDocUrl({
      type: "card_error",
      code: "card_declined",
      decline_code: declineCode,
      message,
      ...(paymentIntent ? { payment_intent: paymentIntent } : {}),
    }),
  );
}

export function authenticationError(message: string): StripeFakeError {
  return new StripeFakeError(401, { type: "invalid_request_error", message });
}

export function idempotencyMismatch(key: string): StripeFakeError {
  return new StripeFakeError(400, {
    type: "idempotency_error",
    message: `Keys for idempotent requests can only be used with the same parameters they were first used with. Try using a key other than '${key}' if you meant to execute a different request.`,
  });
}

export function serviceUnavailable(): StripeFakeError {
  return new StripeFakeError(503, {
    type: "api_error",
    message: "The Stripe fake is in a simulated outage (POST /_fake/outage { down: false } ends it).",
  });
}
