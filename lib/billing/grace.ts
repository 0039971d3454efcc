/**
 * The grace-period rule, once: an invoice holds a studio's overage off while it is owed (open or
 * uncollectible, total above 0) and its due date plus OVERDUE_GRACE_DAYS has passed — on the
 * database's clock, or on Stripe's: Stripe's invoice.overdue, sent OVERDUE_GRACE_DAYS after the due
 * date by the account's automation, is recorded as the invoice's overdue_notice_at and starts the hold
 * from then (whichever comes first). Paying or voiding the invoice ends it. Written as SQL
 * fragments so the run limits (lib/quotas/enforce.ts, inside their one standing query) and the
 * Billing page and chunk debits (lib/billing/overdue.ts) evaluate the same expression.
 */
import "server-only";
import { sql, type SQL } from "drizzle-orm";
import { OVERDUE_GRACE_DAYS } from "./packs";

/** Statuses of an invoice that is still owed. */
export const UNPAID_INVOICE_STATUSES = ["open", "uncollectible"] as const;

const at = (when: Date) => sql`${when.toISOString()}::timestamptz`;

/** `alias` is an invoices row that is owed and has a due date. */
export function owedInvoiceSql(alias: SQL): SQL {
  const statuses = sql.join(UNPAID_INVOICE_STATUSES.map((status) => sql`${status}`), sql`, `);
  return sql`${alias}.status in (${statuses}) and ${alias}.total_cents > 0 and ${alias}.due_at is not null`;
}

/**
 * When invoice `alias` switches overage off if still unpaid: its due date plus the grace period, or
 * the arrival of Stripe's overdue notice if that came first (least() skips a null notice).
 */
export function overageOffAtSql(alias: SQL): SQL {
  return sql`least(${alias}.due_at + make_interval(days => ${OVERDUE_GRACE_DAYS}), ${alias}.overdue_notice_at)`;
}

/** True when an owed invoice of the studio (`studioId`, a SQL value) is past its grace period at `when` (default: the database's now). */
export function overageHeldSql(studioId: SQL, when?: Date): SQL {
  const i = sql.raw("held_i");
  return sql`exists (select 1 from invoices ${i} where ${i}.studio_id = ${studioId} and ${owedInvoiceSql(i)} and ${overageOffAtSql(i)} <= ${when ? at(when) : sql`now()`})`;
}
