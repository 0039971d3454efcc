/**
 * Stripe webhook events. The route verifies the signature on the raw body; this module dedupes by
 * event id and acts on the object as Stripe holds it *now* (re-read through the API), so duplicates
 * and events that arrive out of order change nothing twice.
 */
import "server-only";
import { and, eq, gt, inArray, isNull, sql, type SQL } from "drizzle-orm";
import type Stripe from "stripe";
import { z } from "@/lib/zod";
import type { Db } from "@/db/client";
import { invoices, stripeEvents, studioBilling, studios, type InvoiceKind, type InvoiceLineRecord } from "@/db/schema";
import { ApiError } from "@/lib/errors";
import { parseWith } from "@/lib/api/body";
import { writeAudit } from "@/lib/audit/audit";
import { appendLedgerEntry, purchaseKey } from "@/lib/ledger/ledger";
import { queueMail } from "@/lib/outbox/mail";
import { pokeOutbox } from "@/lib/outbox/process";
import { billingContacts, studioOfCustomer } from "./catalog";
import { invoiceFinalizedMail, paymentFailedMail, receiptMail } from "./mail";
import { LATE_USAGE_METADATA_KEY } from "./usage";
import { findPack, type CreditPack } from "./packs";
import { endSubscription, notifyUnpaidInvoice, type UnpaidNotice } from "./overdue";
import { UNPAID_INVOICE_STATUSES } from "./grace";
import { reportDisputeOpened, syncChargeTakeBacks } from "./refunds";
import { stripeFailure } from "./stripe";

/**
 * The event types Kickdrift acts on (and subscribes its endpoint to). Any other signed event is
 * acknowledged with 2xx and recorded: Stripe retries non-2xx answers and disables endpoints that keep
 * failing, so refusing an event we do not need would put the ones we do need at risk.
 */
export const HANDLED_EVENT_TYPES = [
  "checkout.session.completed",
  "checkout.session.async_payment_succeeded",
  "checkout.session.async_payment_failed",
  "checkout.session.expired",
  "invoice.created",
  "invoice.finalized",
  "invoice.paid",
  "invoice.payment_succeeded",
  "invoice.payment_failed",
  "invoice.voided",
  "invoice.marked_uncollectible",
  "invoice.overdue",
  "charge.refunded",
  "charge.dispute.created",
  "charge.dispute.closed",
  "customer.subscription.deleted",
] as const;

export function isHandledEventType(type: string): boolean {
  return (HANDLED_EVENT_TYPES as readonly string[]).includes(type);
}

const eventSchema = z.object({
  id: z.string().regex(/^evt_[A-Za-z0-9_]+$/, "must be a Stripe event id (evt_…)").max(255),
  type: z.string().min(1).max(100),
  // Stripe object ids are ASCII letters, digits and underscores; anything else (a lone surrogate, say) names nothing of Stripe's.
  data: z.object({ object: z.object({ id: z.string().min(1).max(255).regex(/^[A-Za-z0-9_]+$/, "must be a Stripe object id (letters, digits, _)") }).loose() }).loose(),
}).loose();

export interface WebhookResult {
  received: true;
  duplicate: boolean;
  outcome: string;
}

/** metadata.kind of the invoice Checkout makes for a pack purchase (invoice_creation). */
export const PACK_INVOICE_KIND = "pack_purchase";

/** Validates the parsed event's shape (400 naming the field), before anything is read or written. */
export function checkEvent(event: unknown): { id: string; type: string; objectId: string } {
  const parsed = parseWith(eventSchema, event);
  return { id: parsed.id, type: parsed.type, objectId: parsed.data.object.id };
}

export async function handleStripeEvent(db: Db, stripe: Stripe, event: unknown): Promise<WebhookResult> {
  const { id, type, objectId } = checkEvent(event);
  const [seen] = await db.select().from(stripeEvents).where(eq(stripeEvents.id, id));
  if (seen) return { received: true, duplicate: true, outcome: seen.outcome };
  if (!isHandledEventType(type)) {
    const outcome = `acknowledged: Kickdrift does not act on ${type}`;
    await recordEvent(db, { id, type }, outcome);
    return { received: true, duplicate: false, outcome };
  }
  let outcome: string;
  try {
    if (type.startsWith("checkout.session.")) {
      // With its line items, so what was paid for is checked against the pack, not only the metadata.
      const session = await stripe.checkout.sessions.retrieve(objectId, { expand: ["line_items", "payment_intent"] });
      outcome = type === "checkout.session.async_payment_failed" ? await reportFailedPayment(db, session, { id, type }) : await creditCheckout(db, session, { id, type });
    } else if (type === "charge.refunded") {
      outcome = await syncChargeTakeBacks(db, stripe, objectId, { id, type });
    } else if (type.startsWith("charge.dispute.")) {
      const dispute = await stripe.disputes.retrieve(objectId);
      const chargeId = typeof dispute.charge === "string" ? dispute.charge : dispute.charge.id;
      // Closed (or created after it was already lost): the charge's take-backs as Stripe holds them now.
      outcome = dispute.status === "lost" ? await syncChargeTakeBacks(db, stripe, chargeId, { id, type }) : await reportDisputeOpened(db, stripe, dispute, { id, type });
    } else if (type === "customer.subscription.deleted") {
      const subscription = await stripe.subscriptions.retrieve(objectId);
      outcome = await db.transaction(async (tx) => {
        const done = await endSubscription(tx, subscription);
        await recordEvent(tx, { id, type }, done);
        return done;
      });
    } else {
      const invoice = await stripe.invoices.retrieve(objectId);
      outcome = await syncInvoice(db, stripe, invoice, { id, type });
    }
  } catch (error) {
    if (error instanceof ApiError) throw error;
    if ((error as { statusCode?: number }).statusCode === 404) {
      // Signed by Stripe but naming nothing Stripe holds now (deleted since, or another account's test object): nothing to act on.
      outcome = `ignored: Stripe has no object ${objectId}`;
      await recordEvent(db, { id, type }, outcome);
      return { received: true, duplicate: false, outcome };
    }
    throw stripeFailure(error);
  }
  pokeOutbox();
  return { received: true, duplicate: false, outcome };
}

async function recordEvent(db: Pick<Db, "insert">, event: { id: string; type: string }, outcome: string): Promise<void> {
  await db.insert(stripeEvents).values({ id: event.id, type: event.type, outcome }).onConflictDoNothing();
}

/**
 * Why a paid session does not pay for what its metadata claims, or null when it does: exactly one
 * line item, at the pack's unit price, for the metadata's quantity, and a session total and
 * currency equal to the pack's price × quantity. Metadata alone is not proof of payment.
 */
export function paymentMismatch(session: Stripe.Checkout.Session, pack: CreditPack, quantity: number): string | null {
  const expected = pack.priceCents * quantity;
  if (session.currency !== pack.currency) return `currency is ${String(session.currency)}, the pack is priced in ${pack.currency}`;
  if (session.amount_total !== expected) return `amount_total is ${String(session.amount_total)} cents, ${pack.id} × ${quantity} costs ${expected} cents`;
  const lines = session.line_items?.data;
  if (!lines) return "the session's line items could not be read";
  if (lines.length !== 1) return `the session has ${lines.length} line items, a pack purchase has 1`;
  const [line] = lines;
  if (line.quantity !== quantity) return `the line item's quantity is ${String(line.quantity)}, the metadata says ${quantity}`;
  if (line.price?.unit_amount !== pack.priceCents) return `the line item's unit price is ${String(line.price?.unit_amount)} cents, ${pack.id} costs ${pack.priceCents}`;
  if (line.currency !== pack.currency || line.amount_total !== expected) return `the line item totals ${String(line.amount_total)} ${String(line.currency)}, expected ${expected} ${pack.currency}`;
  return null;
}

/** Credits a paid Checkout session once (key purchase:{sessionId}), whichever event or call sees it first. */
export async function creditCheckout(
  db: Db,
  session: Stripe.Checkout.Session,
  event: { id: string; type: string } | null,
  /** `at`: when the purchase is credited; default the database's now() (only the demo seed's past months pass it). */
  options: { at?: Date } = {},
): Promise<string> {
  const studioId = session.metadata?.studio_id ?? session.client_reference_id ?? null;
  const pack = findPack(session.metadata?.pack_id ?? "");
  const quantity = Number(session.metadata?.quantity ?? "1");
  return db.transaction(async (tx) => {
    let outcome: string;
    let mismatch: string | null = null;
    const [studio] = studioId ? await tx.select().from(studios).where(eq(studios.id, studioId)) : [];
    if (session.status === "complete" && session.payment_status === "unpaid") outcome = `awaiting: session ${session.id} is paid by a delayed method; credited when it settles`;
    else if (session.status !== "complete" || session.payment_status !== "paid") outcome = `ignored: session ${session.id} is ${session.status}/${session.payment_status}`;
    else if (!studio || !pack || !Number.isInteger(quantity) || quantity < 1) outcome = `ignored: session ${session.id} names no studio or pack of ours`;
    else if (typeof session.amount_total !== "number" || !Number.isInteger(session.amount_total)) outcome = `ignored: session ${session.id} has no integer amount`;
    else if ((mismatch = paymentMismatch(session, pack, quantity))) {
      // Credits nothing; the audit log (admin console) keeps what was paid against what was claimed.
      outcome = `refused: session ${session.id} does not pay for its pack: ${mismatch}`;
      console.warn(`[billing] ${outcome}`);
      await writeAudit(tx, {
        actor: null,
        studioId: studio.id,
        action: "payment.mismatch",
        subjectType: "checkout_session",
        subjectId: session.id,
        before: { packId: pack.id, quantity, expectedCents: pack.priceCents * quantity, currency: pack.currency },
        after: { amountTotalCents: session.amount_total, currency: session.currency },
        reason: mismatch,
      });
    } else {
      const computeMs = pack.minutes * quantity * 60_000;
      const written = await appendLedgerEntry(tx, {
        studioId: studio.id,
        kind: "purchase",
        computeMs,
        amountCents: session.amount_total,
        idempotencyKey: purchaseKey(session.id),
        memo: `${pack.name} pack × ${quantity}: ${pack.minutes * quantity} minutes (${session.id})`,
        ...(options.at ? { at: options.at } : {}),
      });
      outcome = written ? `credited ${purchaseKey(session.id)}` : `already credited ${purchaseKey(session.id)}`;
      const buyer = session.metadata?.buyer_email || session.customer_details?.email;
      if (written) {
        await writeAudit(tx, {
          actor: null,
          studioId: studio.id,
          action: "payment.purchase",
          subjectType: "checkout_session",
          subjectId: session.id,
          before: null,
          after: { packId: pack.id, quantity, computeMs, amountCents: session.amount_total, currency: session.currency, buyer: buyer ?? null },
        });
      }
      if (written && buyer) {
        await queueMail(tx, {
          idempotencyKey: `mail:receipt:${session.id}`,
          to: buyer,
          content: receiptMail({ studioId: studio.id, studioName: studio.name, packName: pack.name, minutes: pack.minutes * quantity, amountCents: session.amount_total, sessionId: session.id }),
          studioId: studio.id,
        });
      }
    }
    if (event) await recordEvent(tx, event, outcome);
    return outcome;
  });
}

/**
 * A delayed payment (bank debit) that did not settle: nothing was credited, so nothing is taken back;
 * the buyer and the studio's owners and finance are told once, with the reason Stripe gives.
 */
export async function reportFailedPayment(db: Db, session: Stripe.Checkout.Session, event: { id: string; type: string } | null): Promise<string> {
  const studioId = session.metadata?.studio_id ?? session.client_reference_id ?? null;
  const pack = findPack(session.metadata?.pack_id ?? "");
  let reason = "the bank did not confirm the payment";
  const intentId = typeof session.payment_intent === "string" ? session.payment_intent : session.payment_intent?.id;
  return db.transaction(async (tx) => {
    const [studio] = studioId ? await tx.select().from(studios).where(eq(studios.id, studioId)) : [];
    let outcome: string;
    if (!studio || !pack) outcome = `ignored: session ${session.id} names no studio or pack of ours`;
    else if (session.payment_status === "paid") outcome = `ignored: session ${session.id} is paid`;
    else {
      if (session.payment_intent && typeof session.payment_intent !== "string" && session.payment_intent.last_payment_error?.message) reason = session.payment_intent.last_payment_error.message;
      const recipients = new Set(await billingContacts(tx, studio.id));
      const buyer = session.metadata?.buyer_email || session.customer_details?.email;
      if (buyer) recipients.add(buyer);
      for (const to of recipients) {
        await queueMail(tx, {
          idempotencyKey: `mail:payment-failed:${session.id}:${to}`,
          to,
          content: paymentFailedMail({ studioId: studio.id, studioName: studio.name, packName: pack.name, amountCents: session.amount_total ?? 0, sessionId: session.id, reason }),
          studioId: studio.id,
        });
      }
      outcome = `payment failed: session ${session.id}${intentId ? ` (${intentId})` : ""}; nothing credited, ${recipients.size} told`;
    }
    if (event) await recordEvent(tx, event, outcome);
    return outcome;
  });
}

/**
 * The order an invoice's status moves in (Stripe: draft → open → paid | void | uncollectible, and an
 * uncollectible invoice may still be paid or voided). Paid and void are final.
 */
export const INVOICE_STATUS_RANK: Record<string, number> = { draft: 0, open: 1, uncollectible: 2, paid: 3, void: 3 };

function rankSql(status: SQL): SQL {
  return sql`(case ${status} when 'draft' then 0 when 'open' then 1 when 'uncollectible' then 2 when 'paid' then 3 when 'void' then 3 else 0 end)`;
}

/** True (in SQL) when a mirror at `current` may take `next`: the same status again, or one further on. */
export function statusMayMove(current: SQL, next: SQL): SQL {
  return sql`(${next} = ${current} or ${rankSql(next)} > ${rankSql(current)})`;
}

/** The same rule in TypeScript, for callers that hold both statuses already. */
export function invoiceStatusMayMove(current: string, next: string): boolean {
  return next === current || (INVOICE_STATUS_RANK[next] ?? 0) > (INVOICE_STATUS_RANK[current] ?? 0);
}

function lineQuantityMs(line: Stripe.InvoiceLineItem): number {
  if (line.quantity_decimal !== null && line.quantity_decimal !== undefined) return Math.round(Number(String(line.quantity_decimal)));
  return line.quantity ?? 0;
}

/** Mirrors the invoice as Stripe holds it now; mails owners and finance once when it is first seen finalised. */
export async function syncInvoice(db: Db, stripe: Stripe, invoice: Stripe.Invoice, event: { id: string; type: string } | null): Promise<string> {
  const customerId = typeof invoice.customer === "string" ? invoice.customer : invoice.customer?.id;
  const studioId = customerId ? await studioOfCustomer(db, customerId) : null;
  const lineItems: Stripe.InvoiceLineItem[] = [];
  if (studioId) for await (const line of stripe.invoices.listLineItems(invoice.id!, { limit: 100 })) lineItems.push(line);
  return db.transaction(async (tx) => {
    let outcome: string;
    if (!studioId) outcome = `ignored: invoice ${invoice.id} is not for a studio of ours`;
    else {
      const lines: InvoiceLineRecord[] = lineItems.map((line) => ({
        id: line.id,
        description: line.description ?? "",
        periodStart: line.period.start,
        periodEnd: line.period.end,
        quantityMs: lineQuantityMs(line),
        amountCents: line.amount,
        ...(line.metadata?.[LATE_USAGE_METADATA_KEY] ? { meterIdentifier: line.metadata[LATE_USAGE_METADATA_KEY] } : {}),
      }));
      // The invoice's own period: a late-usage line names an earlier period and does not widen it.
      const own = lines.filter((l) => !l.meterIdentifier);
      const periodStart = new Date(Math.min(invoice.period_start, ...own.map((l) => l.periodStart)) * 1000);
      const periodEnd = new Date(Math.max(invoice.period_end, ...own.map((l) => l.periodEnd)) * 1000);
      const finalizedAtUnix = invoice.status_transitions?.finalized_at ?? null;
      // A pack purchase's invoice (Checkout invoice_creation) carries its pack in metadata; its
      // quantity is the minutes bought, not metered overage, so reconciliation leaves it out.
      const kind: InvoiceKind = invoice.metadata?.kind === PACK_INVOICE_KIND ? "pack" : "overage";
      if (kind === "pack") {
        const pack = findPack(invoice.metadata?.pack_id ?? "");
        const quantity = Number(invoice.metadata?.quantity ?? "0");
        const packMs = pack && Number.isInteger(quantity) && quantity > 0 ? pack.minutes * quantity * 60_000 : 0;
        for (const line of lines) line.quantityMs = lines.length === 1 ? packMs : 0;
      }
      const values = {
        studioId,
        number: invoice.number ?? null,
        status: invoice.status ?? "draft",
        currency: invoice.currency,
        periodStart,
        periodEnd,
        quantityMs: lines.reduce((sum, l) => sum + l.quantityMs, 0),
        totalCents: invoice.total,
        lines,
        finalizedAt: finalizedAtUnix ? new Date(finalizedAtUnix * 1000) : null,
        dueAt: invoice.due_date ? new Date(invoice.due_date * 1000) : null,
        kind,
        hostedInvoiceUrl: invoice.hosted_invoice_url ?? null,
        invoicePdfUrl: invoice.invoice_pdf ?? null,
        updatedAt: new Date(),
      };
      // One conditional statement, not read-then-write: a handler that read the invoice earlier (open)
      // and commits after one that read it later (paid) changes nothing; statuses only move forward.
      const written = await tx
        .insert(invoices)
        .values({ id: invoice.id!, ...values })
        .onConflictDoUpdate({ target: invoices.id, set: values, setWhere: statusMayMove(sql`${invoices.status}`, sql`excluded.status`) })
        .returning({ status: invoices.status });
      if (written.length === 0) {
        const [kept] = await tx.select({ status: invoices.status }).from(invoices).where(eq(invoices.id, invoice.id!));
        outcome = `kept invoice ${invoice.id} at ${kept?.status}: the read (${values.status}) was older`;
      } else outcome = `invoice ${invoice.id} is ${values.status}`;
      // Stripe's overdue notice (sent OVERDUE_GRACE_DAYS after the due date) starts the overage hold on
      // Stripe's clock: recorded once, only while the mirror still holds the invoice owed, never cleared.
      if (event?.type === "invoice.overdue" && written.length > 0) {
        const noted = await tx
          .update(invoices)
          .set({ overdueNoticeAt: sql`now()` })
          .where(and(eq(invoices.id, invoice.id!), isNull(invoices.overdueNoticeAt), inArray(invoices.status, [...UNPAID_INVOICE_STATUSES]), gt(invoices.totalCents, 0)))
          .returning({ at: invoices.overdueNoticeAt });
        if (noted.length > 0) outcome += "; Stripe says it is overdue: overage held until it is paid";
      }
      // A $0 invoice (a period without overage) is kept for the record but mailed to nobody.
      if (written.length > 0 && values.status !== "draft" && values.finalizedAt && values.totalCents > 0) {
        const [studio] = await tx.select().from(studios).where(eq(studios.id, studioId));
        // Owners, finance, the studio's billing e-mail, and for a pack purchase its buyer; each once.
        const recipients = new Set(await billingContacts(tx, studioId));
        const [account] = await tx.select({ billingEmail: studioBilling.billingEmail }).from(studioBilling).where(eq(studioBilling.studioId, studioId));
        if (account?.billingEmail) recipients.add(account.billingEmail);
        if (kind === "pack" && invoice.metadata?.buyer_email) recipients.add(invoice.metadata.buyer_email);
        for (const to of recipients) {
          await queueMail(tx, {
            idempotencyKey: `mail:invoice-finalized:${invoice.id}:${to}`,
            to,
            content: invoiceFinalizedMail({
              studioId,
              studioName: studio.name,
              number: invoice.number ?? invoice.id!,
              kind,
              status: values.status,
              quantityMs: values.quantityMs,
              totalCents: values.totalCents,
              periodStart,
              periodEnd,
              hostedInvoiceUrl: values.hostedInvoiceUrl,
              invoicePdfUrl: values.invoicePdfUrl,
            }),
            studioId,
          });
        }
      }
      // Unpaid notices act on the invoice as Stripe holds it now: one that is paid by the time the event
      // arrives tells nobody, nor does a read older than the mirror (it was not written).
      const notice = event ? UNPAID_NOTICES[event.type] : undefined;
      if (notice && written.length > 0) {
        const told = await notifyUnpaidInvoice(tx, studioId, invoice, notice);
        outcome += told > 0 ? `; ${told} told it is unpaid (${notice})` : "; nothing owed, nobody told";
      }
    }
    if (event) await recordEvent(tx, event, outcome);
    return outcome;
  });
}

const UNPAID_NOTICES: Record<string, UnpaidNotice | undefined> = {
  "invoice.payment_failed": "payment_failed",
  "invoice.overdue": "overdue",
  "invoice.marked_uncollectible": "uncollectible",
};
