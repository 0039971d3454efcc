/**
 * Money going back: a refund (issued by an admin here or in Stripe's dashboard) or a lost dispute
 * takes back the pack's minutes in proportion to the cents returned, and the cents, as ledger entries
 * keyed by the refund or dispute id (refund:re_… / dispute:du_…), so retries and duplicate events write
 * nothing twice. The balance may go below zero; sweeps then pause with the reason
 * (lib/quotas/enforce.ts). Owners and finance are told by e-mail.
 */
import "server-only";
import { and, eq } from "drizzle-orm";
import type Stripe from "stripe";
import { z } from "@/lib/zod";
import type { Db, DbOrTx } from "@/db/client";
import { ledgerEntries, stripeEvents, studios, type User } from "@/db/schema";
import { ApiError, notFound } from "@/lib/errors";
import { writeAudit } from "@/lib/audit/audit";
import { appendLedgerEntry } from "@/lib/ledger/ledger";
import { queueMail } from "@/lib/outbox/mail";
import { pokeOutbox } from "@/lib/outbox/process";
import { billingContacts } from "./catalog";
import { disputeMail, refundMail } from "./mail";
import { stripeFailure } from "./stripe";
import { purchaseKey } from "@/lib/ledger/ledger";

export const refundKey = (refundId: string) => `refund:${refundId}`;
export const disputeKey = (disputeId: string) => `dispute:${disputeId}`;

interface Purchase {
  studioId: string;
  sessionId: string;
  computeMs: number;
  amountCents: number;
}

/** The credited purchase a payment intent paid for, or null (not ours, or never credited). */
async function purchaseOfIntent(db: DbOrTx, stripe: Stripe, paymentIntentId: string): Promise<Purchase | null> {
  const sessions = await stripe.checkout.sessions.list({ payment_intent: paymentIntentId, limit: 1 });
  const session = sessions.data[0];
  if (!session) return null;
  const [entry] = await db.select().from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, purchaseKey(session.id)));
  if (!entry || entry.amountCents <= 0) return null;
  return { studioId: entry.studioId, sessionId: session.id, computeMs: entry.computeMs, amountCents: entry.amountCents };
}

interface TakeBack {
  key: string;
  id: string;
  cents: number;
  created: number;
  what: "refund" | "dispute";
}

/**
 * Minutes for each take-back, from the cumulative cents returned: round(P·C_after/A) − round(P·C_before/A),
 * so the parts of a fully returned purchase add up to exactly its minutes (no millisecond lost to
 * rounding). Order: creation time, then id, the same for every handler that sees the same set.
 */
export function takeBackMs(purchase: { computeMs: number; amountCents: number }, takeBacks: { cents: number }[]): number[] {
  let cumulative = 0;
  return takeBacks.map((t) => {
    const before = Math.round((purchase.computeMs * cumulative) / purchase.amountCents);
    cumulative += t.cents;
    return Math.round((purchase.computeMs * Math.min(cumulative, purchase.amountCents)) / purchase.amountCents) - before;
  });
}

async function takeBacksOfCharge(stripe: Stripe, charge: Stripe.Charge): Promise<TakeBack[]> {
  const list: TakeBack[] = [];
  for await (const r of stripe.refunds.list({ charge: charge.id, limit: 100 })) if (r.status === "succeeded") list.push({ key: refundKey(r.id), id: r.id, cents: r.amount, created: r.created, what: "refund" });
  for await (const d of stripe.disputes.list({ charge: charge.id, limit: 100 })) if (d.status === "lost") list.push({ key: disputeKey(d.id), id: d.id, cents: d.amount, created: d.created, what: "dispute" });
  return list.sort((a, b) => a.created - b.created || a.id.localeCompare(b.id));
}

/**
 * Writes the ledger entries of every refund and lost dispute of a charge that are not written yet,
 * and tells owners and finance once per entry. Returns the keys written by this call.
 */
export async function syncChargeTakeBacks(db: Db, stripe: Stripe, chargeId: string, event: { id: string; type: string } | null): Promise<string> {
  const charge = await stripe.charges.retrieve(chargeId);
  const intentId = typeof charge.payment_intent === "string" ? charge.payment_intent : charge.payment_intent?.id;
  const purchase = intentId ? await purchaseOfIntent(db, stripe, intentId) : null;
  const takeBacks = purchase ? await takeBacksOfCharge(stripe, charge) : [];
  return db.transaction(async (tx) => {
    let outcome: string;
    if (!purchase) outcome = `ignored: charge ${chargeId} paid for no credited purchase of ours`;
    else {
      // One writer per studio at a time, as chunk debits and purchases do.
      const [studio] = await tx.select().from(studios).where(eq(studios.id, purchase.studioId)).for("update");
      const minutes = takeBackMs(purchase, takeBacks);
      const written: string[] = [];
      for (const [i, t] of takeBacks.entries()) {
        const ok = await appendLedgerEntry(tx, {
          studioId: purchase.studioId,
          kind: "refund",
          computeMs: -minutes[i],
          amountCents: -t.cents,
          idempotencyKey: t.key,
          memo: `${t.what === "refund" ? "Refund" : "Dispute lost"} ${t.id} of ${purchase.sessionId}: ${t.cents} cents and ${minutes[i]} ms taken back`,
        });
        if (!ok) continue;
        written.push(t.key);
        for (const to of await billingContacts(tx, purchase.studioId)) {
          await queueMail(tx, {
            idempotencyKey: `mail:${t.key}:${to}`,
            to,
            content: t.what === "refund" ? refundMail({ studioId: studio.id, studioName: studio.name, amountCents: t.cents, takenBackMs: minutes[i], reference: t.id }) : disputeMail({ studioId: studio.id, studioName: studio.name, amountCents: t.cents, takenBackMs: minutes[i], reference: t.id, outcome: "lost" }),
            studioId: purchase.studioId,
          });
        }
      }
      outcome = written.length > 0 ? `took back ${written.join(", ")}` : `nothing new to take back for charge ${chargeId}`;
    }
    if (event) await tx.insert(stripeEvents).values({ id: event.id, type: event.type, outcome }).onConflictDoNothing();
    return outcome;
  });
}

/** A dispute opened: nothing is taken back until it is lost, but owners and finance hear of it now. */
export async function reportDisputeOpened(db: Db, stripe: Stripe, dispute: Stripe.Dispute, event: { id: string; type: string } | null): Promise<string> {
  const chargeId = typeof dispute.charge === "string" ? dispute.charge : dispute.charge.id;
  const intentId = typeof dispute.payment_intent === "string" ? dispute.payment_intent : dispute.payment_intent?.id;
  const purchase = intentId ? await purchaseOfIntent(db, stripe, intentId) : null;
  return db.transaction(async (tx) => {
    let outcome: string;
    if (!purchase) outcome = `ignored: dispute ${dispute.id} (charge ${chargeId}) is not on a credited purchase of ours`;
    else {
      const [studio] = await tx.select().from(studios).where(eq(studios.id, purchase.studioId));
      for (const to of await billingContacts(tx, purchase.studioId)) {
        await queueMail(tx, {
          idempotencyKey: `mail:dispute-opened:${dispute.id}:${to}`,
          to,
          content: disputeMail({ studioId: studio.id, studioName: studio.name, amountCents: dispute.amount, takenBackMs: 0, reference: dispute.id, outcome: "opened" }),
          studioId: purchase.studioId,
        });
      }
      outcome = `dispute ${dispute.id} opened on ${purchase.sessionId}; nothing taken back unless it is lost`;
    }
    if (event) await tx.insert(stripeEvents).values({ id: event.id, type: event.type, outcome }).onConflictDoNothing();
    return outcome;
  });
}

export const adminRefundSchema = z
  .object({
    sessionId: z.string().regex(/^cs_[A-Za-z0-9_]{1,250}$/, "must be a Checkout session id (cs_…)"),
    amountCents: z.number().int("must be a whole number of cents").min(1, "must be at least 1 cent").max(10_000_000, "must be at most 10000000 cents").optional(),
    reason: z.string().trim().min(3, "must say why (at least 3 characters)").max(500, "must be at most 500 characters"),
  })
  .strict();

/**
 * An admin refunds (part of) a studio's pack purchase through the Stripe SDK. The ledger entry is
 * written now with the refund's key; the charge.refunded webhook finds it written and adds nothing.
 */
export async function adminRefund(db: Db, stripe: Stripe, admin: User, studioId: string, input: z.infer<typeof adminRefundSchema>) {
  const [credit] = await db
    .select()
    .from(ledgerEntries)
    .where(and(eq(ledgerEntries.studioId, studioId), eq(ledgerEntries.idempotencyKey, purchaseKey(input.sessionId))));
  if (!credit) throw notFound("Pack purchase");
  let refund: Stripe.Refund;
  let remaining: number;
  let amount: number;
  try {
    const session = await stripe.checkout.sessions.retrieve(input.sessionId);
    const intentId = typeof session.payment_intent === "string" ? session.payment_intent : session.payment_intent?.id;
    const intent = intentId ? await stripe.paymentIntents.retrieve(intentId) : null;
    const latest = intent?.latest_charge;
    if (!intentId || !latest) throw new ApiError("invalid_state", "This checkout has no payment to refund.");
    const charge = await stripe.charges.retrieve(typeof latest === "string" ? latest : latest.id);
    remaining = charge.amount - charge.amount_refunded;
    if (remaining <= 0) throw new ApiError("invalid_state", "This purchase has been refunded in full.");
    amount = input.amountCents ?? remaining;
    if (amount > remaining) throw new ApiError("validation_failed", `amountCents: at most ${remaining} cents of this purchase are left to refund.`, "amountCents");
    refund = await stripe.refunds.create(
      { payment_intent: intentId, amount, reason: "requested_by_customer", metadata: { studio_id: studioId, admin: admin.email } },
      // The same admin action retried (double click, network) refunds once.
      { idempotencyKey: `kd-refund-${input.sessionId}-${remaining}-${amount}` },
    );
  } catch (error) {
    throw stripeFailure(error);
  }
  const chargeId = typeof refund.charge === "string" ? refund.charge : refund.charge?.id;
  const outcome = chargeId ? await syncChargeTakeBacks(db, stripe, chargeId, null) : "no charge";
  await writeAudit(db, {
    actor: admin,
    studioId,
    action: "payment.refund",
    subjectType: "checkout_session",
    subjectId: input.sessionId,
    before: { paidCents: credit.amountCents, remainingCents: remaining },
    after: { refundId: refund.id, refundedCents: amount },
    reason: input.reason,
  });
  pokeOutbox();
  return { refundId: refund.id, amountCents: amount, outcome };
}
