/**
 * A purchase's payment as Stripe holds it now, whatever webhooks did or did not arrive: the return
 * page asks for its own session ("check my payment"), and a scheduled pass reconciles every recent
 * Checkout session with the ledger. Both credit through creditCheckout (key purchase:{sessionId}),
 * so a payment the webhook already credited is never credited twice.
 */
import "server-only";
import { eq } from "drizzle-orm";
import type Stripe from "stripe";
import type { Db } from "@/db/client";
import { ledgerEntries, studioBilling } from "@/db/schema";
import { ApiError, notFound } from "@/lib/errors";
import { enqueueOutbox } from "@/lib/outbox/outbox";
import { pokeOutbox, registerOutboxHandler } from "@/lib/outbox/process";
import { billingConfig, stripeFailure } from "./stripe";
import { purchaseKey } from "@/lib/ledger/ledger";
import { creditCheckout, reportFailedPayment } from "./webhook";

/** What the return page shows: credited, still settling (delayed method), failed, not paid yet, or expired. */
export type PaymentState = "credited" | "processing" | "failed" | "open" | "expired" | "refused";

export interface PaymentCheck {
  sessionId: string;
  state: PaymentState;
  amountCents: number;
  /** Minutes credited by this purchase (integer ms), 0 until credited. */
  creditedMs: number;
  message: string;
}

const SESSION_ID = /^cs_[A-Za-z0-9_]{1,250}$/;

function studioOfSession(session: Stripe.Checkout.Session): string | null {
  return session.metadata?.studio_id ?? session.client_reference_id ?? null;
}

function failedIntent(session: Stripe.Checkout.Session): string | null {
  const intent = session.payment_intent;
  if (!intent || typeof intent === "string") return null;
  return intent.status === "requires_payment_method" && intent.last_payment_error ? (intent.last_payment_error.message ?? "the payment failed") : null;
}

async function creditedMs(db: Db, sessionId: string): Promise<number | null> {
  const [entry] = await db.select({ computeMs: ledgerEntries.computeMs }).from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, purchaseKey(sessionId)));
  return entry ? entry.computeMs : null;
}

/** A Checkout session id that has passed parseSessionId: the type says the check was made, once. */
export type SessionId = string & { readonly __brand: "CheckoutSessionId" };

/** Refuses anything that is not a Checkout session id, before Stripe (or its absence) is consulted. */
export function parseSessionId(sessionId: string): SessionId {
  if (!SESSION_ID.test(sessionId)) throw new ApiError("validation_failed", "sessionId: must be a Checkout session id (cs_…).", "sessionId");
  return sessionId as SessionId;
}

/** Reads the session from Stripe, credits it if paid and not yet credited, and says where the payment stands. */
export async function checkPayment(db: Db, stripe: Stripe, studioId: string, sessionId: SessionId): Promise<PaymentCheck> {
  let session: Stripe.Checkout.Session;
  try {
    session = await stripe.checkout.sessions.retrieve(sessionId, { expand: ["line_items", "payment_intent"] });
  } catch (error) {
    if ((error as { statusCode?: number }).statusCode === 404) throw notFound("Checkout session");
    throw stripeFailure(error);
  }
  // Another studio's session is not found here, as if it did not exist.
  if (studioOfSession(session) !== studioId) throw notFound("Checkout session");
  const amountCents = session.amount_total ?? 0;
  if (session.status === "complete" && session.payment_status === "paid") {
    const outcome = await creditCheckout(db, session, null);
    pokeOutbox();
    const ms = await creditedMs(db, sessionId);
    if (ms === null) return { sessionId, state: "refused", amountCents, creditedMs: 0, message: `The payment was received but not credited: ${outcome}. An admin has the details.` };
    return { sessionId, state: "credited", amountCents, creditedMs: ms, message: "Payment received. The minutes are on the balance." };
  }
  if (session.status === "expired") return { sessionId, state: "expired", amountCents, creditedMs: 0, message: "This checkout expired; nothing was charged." };
  if (session.status === "open") return { sessionId, state: "open", amountCents, creditedMs: 0, message: "This checkout has not been paid yet." };
  const failure = failedIntent(session);
  if (failure) return { sessionId, state: "failed", amountCents, creditedMs: 0, message: `The payment failed: ${failure}. Nothing was credited or charged.` };
  return { sessionId, state: "processing", amountCents, creditedMs: 0, message: "The bank payment is on its way; the minutes are credited when it settles (this can take a few days)." };
}

export interface CheckoutReconciliation {
  checked: number;
  /** Sessions paid at Stripe that the ledger lacked and this pass credited (a missed webhook). */
  credited: string[];
  /** Failed delayed payments reported by this pass (their e-mails are keyed, so only once). */
  failed: string[];
}

/** How far back the scheduled pass looks: longer than Stripe's retry window for a single event (3 days). */
export const CHECKOUT_RECONCILE_WINDOW_S = 4 * 86_400;

/** Every Checkout session of ours created in the window, credited or reported as Stripe holds it now. */
export async function reconcileRecentCheckouts(db: Db, stripe: Stripe, opts: { sinceUnix: number }): Promise<CheckoutReconciliation> {
  const result: CheckoutReconciliation = { checked: 0, credited: [], failed: [] };
  const ours = new Set((await db.select({ customer: studioBilling.stripeCustomerId }).from(studioBilling)).map((r) => r.customer));
  for await (const listed of stripe.checkout.sessions.list({ created: { gte: opts.sinceUnix }, status: "complete", limit: 100 })) {
    const customer = typeof listed.customer === "string" ? listed.customer : listed.customer?.id;
    if (!customer || !ours.has(customer)) continue;
    result.checked++;
    if ((await creditedMs(db, listed.id)) !== null) continue;
    const session = await stripe.checkout.sessions.retrieve(listed.id, { expand: ["line_items", "payment_intent"] });
    if (session.payment_status === "paid") {
      const outcome = await creditCheckout(db, session, null);
      if (outcome.startsWith("credited")) result.credited.push(session.id);
    } else if (failedIntent(session)) {
      const outcome = await reportFailedPayment(db, session, null);
      if (outcome.startsWith("payment failed")) result.failed.push(session.id);
    }
  }
  if (result.credited.length + result.failed.length > 0) pokeOutbox();
  return result;
}

/** The schedule runs on the outbox: each pass queues the next, keyed by its slot so several processes queue it once. */
export const CHECKOUT_RECONCILE_KIND = "billing.reconcile_checkouts";
export const CHECKOUT_RECONCILE_EVERY_MS = 15 * 60_000;

function slotKey(at: Date): string {
  return `reconcile:checkouts:${new Date(Math.floor(at.getTime() / CHECKOUT_RECONCILE_EVERY_MS) * CHECKOUT_RECONCILE_EVERY_MS).toISOString()}`;
}

/** Queues the pass of the slot after `now` (idempotent per slot). */
export async function scheduleCheckoutReconcile(db: Db, now: Date): Promise<void> {
  const next = new Date((Math.floor(now.getTime() / CHECKOUT_RECONCILE_EVERY_MS) + 1) * CHECKOUT_RECONCILE_EVERY_MS);
  await enqueueOutbox(db, { kind: CHECKOUT_RECONCILE_KIND, idempotencyKey: slotKey(next), payload: { slot: next.toISOString() }, notBefore: next });
}

export async function runScheduledCheckoutReconcile(db: Db, stripe: Stripe, now: Date): Promise<CheckoutReconciliation> {
  const result = await reconcileRecentCheckouts(db, stripe, { sinceUnix: Math.floor(now.getTime() / 1000) - CHECKOUT_RECONCILE_WINDOW_S });
  if (result.credited.length > 0) console.warn(`[billing] reconcile credited ${result.credited.length} purchase(s) a webhook missed: ${result.credited.join(", ")}`);
  await scheduleCheckoutReconcile(db, now);
  return result;
}

/** Registers the pass with the process's outbox and queues the first one (lib/billing/startup.ts). */
export async function startCheckoutReconcile(db: Db): Promise<void> {
  registerOutboxHandler(CHECKOUT_RECONCILE_KIND, async () => {
    await runScheduledCheckoutReconcile(db, billingConfig().stripe, new Date());
  });
  // Right after start too: a server that was down while Stripe gave up on an event catches up now.
  await enqueueOutbox(db, { kind: CHECKOUT_RECONCILE_KIND, idempotencyKey: `${slotKey(new Date())}:start`, payload: { slot: "start" } });
  await scheduleCheckoutReconcile(db, new Date());
}
