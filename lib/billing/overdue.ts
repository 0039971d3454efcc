/**
 * Unpaid overage invoices. Stripe tells us an invoice's payment failed (invoice.payment_failed), that
 * it is past its due date (invoice.overdue) or written off (invoice.marked_uncollectible); owners and
 * finance are told by e-mail with the amount and the link to pay. An invoice still unpaid
 * OVERDUE_GRACE_DAYS after its due date switches overage off for the studio until it is paid.
 *
 * Stripe's own overdue notice (invoice.overdue, which the account's automation sends OVERDUE_GRACE_DAYS
 * after the due date) starts the hold too, on Stripe's clock (lib/billing/grace.ts).
 *
 * The switch is not stored: it is read from the invoice mirror (status, due date, notice) at the time of
 * asking, so it goes back on by itself when invoice.paid is mirrored, whatever order the events came
 * in, and the owner's own choice (studio_quotas.overage_allowed) is never overwritten.
 */
import "server-only";
import { eq, sql } from "drizzle-orm";
import type Stripe from "stripe";
import type { DbOrTx } from "@/db/client";
import { queryRows, sqlDate, sqlNumber } from "@/db/rows";
import { studioBilling, studios } from "@/db/schema";
import { queueMail } from "@/lib/outbox/mail";
import { z } from "@/lib/zod";
import { billingContacts } from "./catalog";
import { invoicePaymentDueMail, subscriptionEndedMail } from "./mail";
import { owedInvoiceSql, overageOffAtSql } from "./grace";
import { OVERDUE_GRACE_DAYS } from "./packs";

export { OVERDUE_GRACE_DAYS };
const DAY_MS = 86_400_000;

export interface UnpaidInvoice {
  id: string;
  number: string | null;
  status: string;
  totalCents: number;
  dueAt: string;
  /** When overage switches off if the invoice is still unpaid: dueAt + OVERDUE_GRACE_DAYS. */
  overageOffAt: string;
  overdue: boolean;
  /** True once overageOffAt has passed (the invoice holds overage off): by the database's clock, or since Stripe's overdue notice. */
  overageOff: boolean;
}

export interface OverageHold {
  /** True when an invoice is unpaid past its due date plus the grace period: no overage accrues. */
  suspended: boolean;
  graceDays: number;
  /** Unpaid invoices with a due date, oldest due first. */
  unpaid: UnpaidInvoice[];
}

/** The database's clock: the grace period runs on the same clock as the ledger's timestamps. */
export async function databaseNow(db: DbOrTx): Promise<Date> {
  const [row] = await queryRows(db, sql`select now() as now`, z.object({ now: sqlDate }));
  return row.now;
}

const unpaidRow = z
  .object({
    id: z.string(),
    number: z.string().nullable(),
    status: z.string(),
    total_cents: sqlNumber,
    due_at: sqlDate,
    overage_off_at: sqlDate,
    overdue: z.boolean(),
    overage_off: z.boolean(),
  })
  .transform((r) => ({
    id: r.id,
    number: r.number,
    status: r.status,
    totalCents: r.total_cents,
    dueAt: r.due_at.toISOString(),
    overageOffAt: r.overage_off_at.toISOString(),
    overdue: r.overdue,
    overageOff: r.overage_off,
  }));

/** Where the studio's unpaid invoices leave its overage at `at` (default: the database's now). */
export async function overageHold(db: DbOrTx, studioId: string, at?: Date): Promise<OverageHold> {
  // The rule is lib/billing/grace.ts's SQL, the same the run limits evaluate (lib/quotas/enforce.ts).
  const when = at ? sql`${at.toISOString()}::timestamptz` : sql`now()`;
  const i = sql.raw("i");
  const unpaid = await queryRows(
    db,
    sql`
    select i.id, i.number, i.status, i.total_cents, i.due_at, ${overageOffAtSql(i)} as overage_off_at,
      (i.due_at <= ${when} or coalesce(i.overdue_notice_at <= ${when}, false)) as overdue, ${overageOffAtSql(i)} <= ${when} as overage_off
    from invoices i where i.studio_id = ${studioId} and ${owedInvoiceSql(i)}
    order by i.due_at, i.id`,
    unpaidRow,
  );
  return { suspended: unpaid.some((u) => u.overageOff), graceDays: OVERDUE_GRACE_DAYS, unpaid };
}

/** The link that pays the invoice: Stripe's hosted invoice page when it has one, else the studio's Billing page. */
export function payLink(invoice: Stripe.Invoice, billingPageUrl: string): string {
  const hosted = (invoice as { hosted_invoice_url?: string | null }).hosted_invoice_url;
  return typeof hosted === "string" && hosted.length > 0 ? hosted : billingPageUrl;
}

export type UnpaidNotice = "payment_failed" | "overdue" | "uncollectible";

/**
 * Mails owners and finance that an invoice is unpaid, if Stripe still holds it unpaid (a late
 * invoice.payment_failed after invoice.paid tells nobody). Keyed per invoice, notice (and attempt
 * for failures), recipient: a duplicate or concurrent delivery mails once.
 */
export async function notifyUnpaidInvoice(tx: DbOrTx, studioId: string, invoice: Stripe.Invoice, notice: UnpaidNotice): Promise<number> {
  if (invoice.status !== "open" && invoice.status !== "uncollectible") return 0;
  const amountCents = invoice.amount_remaining ?? invoice.amount_due ?? 0;
  if (amountCents <= 0) return 0;
  const [studio] = await tx.select({ name: studios.name }).from(studios).where(eq(studios.id, studioId));
  if (!studio) return 0;
  const dueAt = invoice.due_date ? new Date(invoice.due_date * 1000) : null;
  const overageOffAt = dueAt ? new Date(dueAt.getTime() + OVERDUE_GRACE_DAYS * DAY_MS) : null;
  const attempt = notice === "payment_failed" ? `:${invoice.attempt_count ?? 0}` : "";
  const recipients = await billingContacts(tx, studioId);
  for (const to of recipients) {
    await queueMail(tx, {
      idempotencyKey: `mail:invoice-${notice}:${invoice.id}${attempt}:${to}`,
      to,
      content: invoicePaymentDueMail({ studioId, studioName: studio.name, number: invoice.number ?? invoice.id!, amountCents, notice, dueAt, overageOffAt, graceDays: OVERDUE_GRACE_DAYS, payUrl: (billing) => payLink(invoice, billing) }),
      studioId,
    });
  }
  return recipients.length;
}

/**
 * The studio's overage subscription ended (cancelled in Stripe's dashboard, or by Stripe after
 * failed payments). The mirror forgets it, so the next overage makes a new one; the ended id is kept
 * so that new one is made under a new idempotency key. subscriptionStartedAt stays: it dates the
 * first metered usage, which the invoices already issued are reconciled from. Conditional on the id: a duplicate or a late
 * event for an older subscription changes nothing.
 */
export async function endSubscription(tx: DbOrTx, subscription: Stripe.Subscription): Promise<string> {
  if (subscription.status !== "canceled" && subscription.status !== "incomplete_expired") return `ignored: subscription ${subscription.id} is ${subscription.status}`;
  const ended = await tx
    .update(studioBilling)
    .set({ stripeSubscriptionId: null, endedSubscriptionId: subscription.id })
    .where(eq(studioBilling.stripeSubscriptionId, subscription.id))
    .returning({ studioId: studioBilling.studioId });
  if (ended.length === 0) return `kept: subscription ${subscription.id} is not a studio's current one`;
  const studioId = ended[0].studioId;
  const [studio] = await tx.select({ name: studios.name }).from(studios).where(eq(studios.id, studioId));
  for (const to of await billingContacts(tx, studioId)) {
    await queueMail(tx, { idempotencyKey: `mail:subscription-ended:${subscription.id}:${to}`, to, content: subscriptionEndedMail({ studioId, studioName: studio?.name ?? studioId }), studioId });
  }
  return `subscription ${subscription.id} ended; the next overage starts a new one`;
}
