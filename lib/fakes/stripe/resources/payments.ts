/**
 * Charges, refunds and disputes, as far as Kickdrift's money paths use them: a charge per successful
 * (or pending bank) payment, `POST /v1/refunds` (full or partial, by payment intent or charge) with
 * `refund.created` + `charge.refunded`, and disputes opened and closed from the control endpoints
 * (Stripe's own test cards open them after payment; `charge.dispute.created` / `…closed`).
 * Shapes follow Stripe's API reference and the SDK's types (node_modules/stripe/esm/resources).
 */
import "server-only";
import { clone, createdFilter, fieldsEqual, mustGet, paginate, type Ctx, type HandlerResult } from "../context";
import { invalidParam, invalidRequest } from "../errors";
import { applyMetadata, type Params } from "../params";
import { newId, type StripeObject } from "../store";

/** A charge for a payment intent: `succeeded` for cards, `pending` for a bank debit until it settles. */
export function createCharge(ctx: Ctx, pi: StripeObject, status: "succeeded" | "pending"): StripeObject {
  const charge: StripeObject = {
    id: newId("ch", 24),
    object: "charge",
    amount: pi.amount,
    amount_captured: status === "succeeded" ? pi.amount : 0,
    amount_refunded: 0,
    captured: status === "succeeded",
    created: ctx.now,
    currency: pi.currency,
    customer: pi.customer ?? null,
    description: pi.description ?? null,
    disputed: false,
    failure_code: null,
    failure_message: null,
    livemode: false,
    metadata: clone(pi.metadata ?? {}),
    paid: status === "succeeded",
    payment_intent: pi.id,
    payment_method: pi.payment_method ?? null,
    refunded: false,
    status,
  };
  ctx.store.insert("charges", charge);
  pi.latest_charge = charge.id;
  return charge;
}

/** A pending bank charge settles: succeeded (paid, captured) or failed with the bank's code. */
export function settleCharge(charge: StripeObject, outcome: { ok: true } | { ok: false; code: string; message: string }): void {
  if (outcome.ok) {
    charge.status = "succeeded";
    charge.paid = true;
    charge.captured = true;
    charge.amount_captured = charge.amount;
  } else {
    charge.status = "failed";
    charge.failure_code = outcome.code;
    charge.failure_message = outcome.message;
  }
}

export function retrieveCharge(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  return { body: mustGet(ctx.store, "charges", id) };
}

const REFUND_REASONS = ["duplicate", "fraudulent", "requested_by_customer"] as const;

export function createRefund(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["payment_intent", "charge", "amount", "reason", "metadata", "instructions_email"]);
  const intentId = params.string("payment_intent");
  const chargeId = params.string("charge");
  if (!intentId && !chargeId) throw invalidRequest("One of the following params should be provided for this request: payment_intent or charge.", undefined, "parameter_missing");
  if (intentId && chargeId) throw invalidRequest("You cannot specify both payment_intent and charge.", "charge", "parameters_exclusive");
  let charge: StripeObject;
  if (chargeId) charge = mustGet(ctx.store, "charges", chargeId, "charge");
  else {
    const pi = mustGet(ctx.store, "payment_intents", intentId!, "payment_intent");
    if (!pi.latest_charge) throw invalidRequest(`This PaymentIntent (${pi.id}) does not have a successful charge to refund.`, "payment_intent");
    charge = mustGet(ctx.store, "charges", pi.latest_charge as string, "payment_intent");
  }
  if (charge.status !== "succeeded") throw invalidRequest(`Charge ${charge.id} has not succeeded; only succeeded charges can be refunded.`, chargeId ? "charge" : "payment_intent");
  const remaining = (charge.amount as number) - (charge.amount_refunded as number);
  if (remaining <= 0) throw invalidRequest(`Charge ${charge.id} has already been refunded.`, undefined, "charge_already_refunded");
  if (charge.disputed) {
    const dispute = ctx.store.newestFirst("disputes").find((d) => d.charge === charge.id);
    if (dispute && dispute.status !== "won") throw invalidRequest(`Charge ${charge.id} has been charged back; it cannot be refunded.`, undefined, "charge_disputed");
  }
  const amount = params.integer("amount", { min: 1 }) ?? remaining;
  if (amount > remaining) throw invalidParam("amount", `Refund amount (${amount}) is greater than unrefunded amount on charge (${remaining}).`, "amount_too_large");
  const refund: StripeObject = {
    id: newId("re", 24),
    object: "refund",
    amount,
    balance_transaction: null,
    charge: charge.id,
    created: ctx.now,
    currency: charge.currency,
    destination_details: null,
    metadata: applyMetadata({}, params.metadata()),
    payment_intent: charge.payment_intent,
    reason: params.string("reason", { oneOf: REFUND_REASONS }) ?? null,
    receipt_number: null,
    status: "succeeded",
  };
  ctx.store.insert("refunds", refund);
  const previous = { amount_refunded: charge.amount_refunded, refunded: charge.refunded };
  charge.amount_refunded = (charge.amount_refunded as number) + amount;
  charge.refunded = charge.amount_refunded === charge.amount;
  ctx.emit("refund.created", refund);
  ctx.emit("charge.refunded", charge, previous);
  return { body: refund };
}

export function retrieveRefund(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  return { body: mustGet(ctx.store, "refunds", id) };
}

export function listRefunds(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["limit", "starting_after", "ending_before", "charge", "payment_intent", "created"]);
  const matches = fieldsEqual({ charge: params.string("charge"), payment_intent: params.string("payment_intent") });
  const created = createdFilter(params);
  const items = ctx.store.newestFirst("refunds").filter((r) => matches(r) && created(r));
  return { body: paginate(items, params, "/v1/refunds", "refund") };
}

export function retrieveDispute(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  return { body: mustGet(ctx.store, "disputes", id) };
}

export function listDisputes(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["limit", "starting_after", "ending_before", "charge", "payment_intent", "created"]);
  const matches = fieldsEqual({ charge: params.string("charge"), payment_intent: params.string("payment_intent") });
  const created = createdFilter(params);
  const items = ctx.store.newestFirst("disputes").filter((d) => matches(d) && created(d));
  return { body: paginate(items, params, "/v1/disputes", "dispute") };
}

/** The cardholder's bank disputes a succeeded charge (for the whole remaining amount unless `amount`). */
export function openDispute(ctx: Ctx, chargeId: string, opts: { amount?: number; reason?: string } = {}): StripeObject {
  const charge = mustGet(ctx.store, "charges", chargeId, "charge");
  if (charge.status !== "succeeded") throw invalidRequest(`Charge ${charge.id} has not succeeded; it cannot be disputed.`, "charge");
  if (ctx.store.newestFirst("disputes").some((d) => d.charge === charge.id)) throw invalidRequest(`Charge ${charge.id} is already disputed.`, "charge");
  const disputable = (charge.amount as number) - (charge.amount_refunded as number);
  const amount = opts.amount ?? disputable;
  if (!Number.isInteger(amount) || amount < 1 || amount > disputable) throw invalidParam("amount", `amount must be a whole number of cents from 1 to ${disputable}`);
  const dispute: StripeObject = {
    id: newId("du", 24),
    object: "dispute",
    amount,
    balance_transactions: [],
    charge: charge.id,
    created: ctx.now,
    currency: charge.currency,
    evidence_details: { due_by: ctx.now + 7 * 86_400, has_evidence: false, past_due: false, submission_count: 0 },
    is_charge_refundable: false,
    livemode: false,
    metadata: {},
    payment_intent: charge.payment_intent,
    reason: opts.reason ?? "fraudulent",
    status: "needs_response",
  };
  ctx.store.insert("disputes", dispute);
  charge.disputed = true;
  ctx.emit("charge.dispute.created", dispute);
  return dispute;
}

/** The dispute is decided: `lost` (the money stays with the cardholder) or `won`. */
export function closeDispute(ctx: Ctx, disputeId: string, outcome: "lost" | "won"): StripeObject {
  const dispute = mustGet(ctx.store, "disputes", disputeId, "dispute");
  if (dispute.status === "lost" || dispute.status === "won") throw invalidRequest(`Dispute ${dispute.id} is already closed (${String(dispute.status)}).`, "dispute");
  const previous = { status: dispute.status };
  dispute.status = outcome;
  ctx.emit("charge.dispute.closed", dispute, previous);
  return dispute;
}
