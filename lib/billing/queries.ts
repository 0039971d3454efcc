/** Read models of the billing pages and API: balance, the ledger table, usage breakdowns, invoices and their reconciliation, the platform's finance view. */
import "server-only";
import { and, asc, count, desc, eq, gte, lt, sql, type SQL } from "drizzle-orm";
import { z } from "@/lib/zod";
import type { DbOrTx } from "@/db/client";
import { invoices, ledgerEntries, outbox, studioBilling, studios, sweeps, users, type InvoiceRow } from "@/db/schema";
import { LEDGER_KINDS } from "@/lib/ledger/kinds";
import { parseWith } from "@/lib/api/body";
import { csvCell } from "@/lib/csv";
import { notFound } from "@/lib/errors";
import { balanceMs, monthlyOverageMs, monthlyUsageMs } from "@/lib/quotas/standing";
import { effectiveQuotas, monthOf } from "@/lib/quotas/plan";
import { CREDIT_PACKS, LOW_BALANCE_MS, OVERAGE_CENTS_PER_MINUTE } from "./packs";
import { overageHold } from "./overdue";
import { overageSettings } from "./overage-switch";
import { METER_EVENT_KIND } from "./usage";

export async function billingSummary(db: DbOrTx, studioId: string) {
  const now = new Date();
  // Independent reads, issued together: on one client (a transaction, PGlite) they queue in order; on
  // the pool each takes a connection, and none depends on another's result.
  const [quotas, hold, owner, balance, overageThisMonthMs, usedThisMonthMs] = await Promise.all([
    effectiveQuotas(db, studioId),
    overageHold(db, studioId),
    overageSettings(db, studioId),
    balanceMs(db, studioId),
    monthlyOverageMs(db, studioId, now),
    monthlyUsageMs(db, studioId, now),
  ]);
  return {
    balanceMs: balance,
    lowBalanceMs: LOW_BALANCE_MS,
    packs: CREDIT_PACKS,
    overage: {
      /** Permitted by an admin and switched on by the owner; `held` says an unpaid invoice holds it off for now. */
      allowed: quotas.overageAllowed,
      /** A platform admin's ceiling: overage may be switched on at all. */
      permitted: owner.permitted,
      /** The owner's switch (lib/billing/overage-switch.ts). */
      on: owner.on,
      held: hold.suspended,
      graceDays: hold.graceDays,
      unpaidInvoices: hold.unpaid,
      capMs: quotas.overageCapMs,
      centsPerMinute: OVERAGE_CENTS_PER_MINUTE,
      thisMonthMs: overageThisMonthMs,
    },
    month: { key: monthOf(now).key, usedMs: usedThisMonthMs, capMs: quotas.monthlyComputeMs },
    taxNote: "Prices before tax; tax handling is out of scope.",
  };
}

const dateParam = z.iso.date("must be a date YYYY-MM-DD");
export const LEDGER_SORTS = ["createdAt", "kind", "computeMs", "overageMs", "amountCents"] as const;
export const ledgerQuerySchema = z
  .object({
    kind: z.enum(LEDGER_KINDS).optional(),
    from: dateParam.optional(),
    to: dateParam.optional(),
    sort: z.enum(LEDGER_SORTS).default("createdAt"),
    order: z.enum(["asc", "desc"]).default("desc"),
    page: z.coerce.number().int("must be a whole number").min(1, "must be at least 1").max(100_000, "must be at most 100000").default(1),
    pageSize: z.coerce.number().int("must be a whole number").min(1, "must be at least 1").max(200, "must be at most 200").default(25),
    format: z.enum(["json", "csv"]).default("json"),
  })
  .strict();
export type LedgerQuery = z.infer<typeof ledgerQuerySchema>;

export function parseLedgerQuery(url: URL): LedgerQuery {
  return parseWith(ledgerQuerySchema, Object.fromEntries(url.searchParams));
}

function ledgerFilter(studioId: string, q: LedgerQuery): SQL {
  const parts: SQL[] = [eq(ledgerEntries.studioId, studioId)];
  if (q.kind) parts.push(eq(ledgerEntries.kind, q.kind));
  if (q.from) parts.push(gte(ledgerEntries.createdAt, new Date(`${q.from}T00:00:00Z`)));
  // `to` is inclusive: the whole day.
  if (q.to) parts.push(lt(ledgerEntries.createdAt, new Date(new Date(`${q.to}T00:00:00Z`).getTime() + 86_400_000)));
  return and(...parts)!;
}

export async function ledgerPage(db: DbOrTx, studioId: string, q: LedgerQuery) {
  const where = ledgerFilter(studioId, q);
  const column = ledgerEntries[q.sort];
  const order = q.order === "asc" ? [asc(column), asc(ledgerEntries.id)] : [desc(column), desc(ledgerEntries.id)];
  const all = q.format === "csv";
  const rows = await db
    .select()
    .from(ledgerEntries)
    .where(where)
    .orderBy(...order)
    .limit(all ? 1_000_000 : q.pageSize)
    .offset(all ? 0 : (q.page - 1) * q.pageSize);
  const [total] = await db.select({ n: count() }).from(ledgerEntries).where(where);
  return {
    entries: rows.map((r) => ({ id: r.id, kind: r.kind, computeMs: r.computeMs, overageMs: r.overageMs, amountCents: r.amountCents, sweepId: r.sweepId, chunkIndex: r.chunkIndex, memo: r.memo, createdAt: r.createdAt.toISOString() })),
    page: q.page,
    pageSize: q.pageSize,
    total: Number(total.n),
  };
}

export const usageQuerySchema = z.object({ days: z.coerce.number().int("must be a whole number").min(1, "must be at least 1").max(366, "must be at most 366").default(30) }).strict();

/** Compute used (prepaid + overage, integer ms) per UTC day, per sweep and per member who started the sweep. */
export async function usageBreakdown(db: DbOrTx, studioId: string, days: number) {
  const since = new Date(Date.now() - days * 86_400_000);
  const used = sql<string>`sum(${ledgerEntries.overageMs} - ${ledgerEntries.computeMs})`;
  const where = and(eq(ledgerEntries.studioId, studioId), eq(ledgerEntries.kind, "usage"), gte(ledgerEntries.createdAt, since));
  const day = sql<string>`to_char(${ledgerEntries.createdAt} at time zone 'UTC', 'YYYY-MM-DD')`;
  const byDay = await db.select({ day, usedMs: used, overageMs: sql<string>`sum(${ledgerEntries.overageMs})` }).from(ledgerEntries).where(where).groupBy(day).orderBy(day);
  const bySweep = await db
    .select({ sweepId: ledgerEntries.sweepId, name: sweeps.name, usedMs: used })
    .from(ledgerEntries)
    .leftJoin(sweeps, eq(sweeps.id, ledgerEntries.sweepId))
    .where(where)
    .groupBy(ledgerEntries.sweepId, sweeps.name)
    .orderBy(desc(used));
  const byMember = await db
    .select({ userId: sweeps.createdByUserId, email: users.email, usedMs: used })
    .from(ledgerEntries)
    .leftJoin(sweeps, eq(sweeps.id, ledgerEntries.sweepId))
    .leftJoin(users, eq(users.id, sweeps.createdByUserId))
    .where(where)
    .groupBy(sweeps.createdByUserId, users.email)
    .orderBy(desc(used));
  return {
    days,
    byDay: byDay.map((r) => ({ day: r.day, usedMs: Number(r.usedMs), overageMs: Number(r.overageMs) })),
    bySweep: bySweep.map((r) => ({ sweepId: r.sweepId, name: r.name ?? "(deleted sweep)", usedMs: Number(r.usedMs) })),
    byMember: byMember.map((r) => ({ userId: r.userId, email: r.email ?? "(API token or removed member)", usedMs: Number(r.usedMs) })),
  };
}

function invoiceView(row: InvoiceRow) {
  return {
    id: row.id,
    number: row.number,
    status: row.status,
    currency: row.currency,
    periodStart: row.periodStart.toISOString(),
    periodEnd: row.periodEnd.toISOString(),
    quantityMs: row.quantityMs,
    totalCents: row.totalCents,
    finalizedAt: row.finalizedAt?.toISOString() ?? null,
    kind: row.kind,
    hostedInvoiceUrl: row.hostedInvoiceUrl,
    invoicePdfUrl: row.invoicePdfUrl,
  };
}

export async function listInvoices(db: DbOrTx, studioId: string) {
  const rows = await db.select().from(invoices).where(eq(invoices.studioId, studioId)).orderBy(desc(invoices.periodEnd), desc(invoices.createdAt));
  return rows.map(invoiceView);
}

export const invoicesQuerySchema = z.object({ format: z.enum(["json", "csv"]).default("json") }).strict();

/** Cents as a plain decimal amount ("1234.05", "-0.50"): exact, from the integer, never through a float. */
export function centsToDecimal(cents: number): string {
  const sign = cents < 0 ? "-" : "";
  const abs = Math.abs(cents);
  return `${sign}${Math.trunc(abs / 100)}.${String(abs % 100).padStart(2, "0")}`;
}

/**
 * The invoices as CSV for a bookkeeping import: integer cents (`total_cents`) and the same amount
 * formatted (`total_amount`, a decimal in `currency`), both named in the header.
 */
export function invoicesCsv(list: Awaited<ReturnType<typeof listInvoices>>): string {
  const header = ["invoice_id", "number", "kind", "status", "period_start_utc", "period_end_utc", "finalized_at_utc", "currency", "quantity_ms", "total_cents", "total_amount", "hosted_invoice_url", "invoice_pdf_url"];
  const lines = list.map((i) =>
    [i.id, i.number, i.kind, i.status, i.periodStart, i.periodEnd, i.finalizedAt, i.currency.toUpperCase(), i.quantityMs, i.totalCents, centsToDecimal(i.totalCents), i.hostedInvoiceUrl, i.invoicePdfUrl].map(csvCell).join(","),
  );
  return [header.join(","), ...lines].join("\r\n") + "\r\n";
}

/**
 * Overage usage entries of a studio whose time falls in [start, end): an entry's time is when it was
 * written, or the start of the studio's overage subscription if later (meter events use the same rule).
 */
async function overageEntriesIn(db: DbOrTx, studioId: string, start: Date, end: Date, subscriptionStartedAt: Date | null, billedLate: ReadonlySet<string>) {
  const at = subscriptionStartedAt ? sql`greatest(${ledgerEntries.createdAt}, ${subscriptionStartedAt.toISOString()}::timestamptz)` : sql`${ledgerEntries.createdAt}`;
  const rows = await db
    .select({ id: ledgerEntries.id, key: ledgerEntries.idempotencyKey, sweepId: ledgerEntries.sweepId, chunkIndex: ledgerEntries.chunkIndex, overageMs: ledgerEntries.overageMs, createdAt: ledgerEntries.createdAt })
    .from(ledgerEntries)
    .where(
      and(
        eq(ledgerEntries.studioId, studioId),
        eq(ledgerEntries.kind, "usage"),
        sql`${ledgerEntries.overageMs} > 0`,
        sql`${at} >= ${start.toISOString()}::timestamptz`,
        sql`${at} < ${end.toISOString()}::timestamptz`,
      ),
    )
    .orderBy(asc(ledgerEntries.createdAt), asc(ledgerEntries.id));
  // Usage billed late sits on the later invoice's own line, not on its period's.
  return rows.filter((r) => !billedLate.has(r.key)).map(({ key: _key, ...rest }) => rest);
}

/** The overage entry a late-usage line bills (its ledger key), as a one-element list. */
async function lateEntry(db: DbOrTx, studioId: string, key: string) {
  return db
    .select({ id: ledgerEntries.id, sweepId: ledgerEntries.sweepId, chunkIndex: ledgerEntries.chunkIndex, overageMs: ledgerEntries.overageMs, createdAt: ledgerEntries.createdAt })
    .from(ledgerEntries)
    .where(and(eq(ledgerEntries.studioId, studioId), eq(ledgerEntries.kind, "usage"), eq(ledgerEntries.idempotencyKey, key)));
}

/** Ledger keys of a studio's usage billed on late-usage lines of its invoices (void invoices bill nothing). */
async function lateBilledKeys(db: DbOrTx, studioId: string): Promise<Set<string>> {
  const rows = await db.select({ lines: invoices.lines, status: invoices.status }).from(invoices).where(eq(invoices.studioId, studioId));
  const keys = new Set<string>();
  for (const r of rows) if (r.status !== "void") for (const line of r.lines) if (line.meterIdentifier) keys.add(line.meterIdentifier);
  return keys;
}

/** One invoice with each line reconciled against the ledger's overage entries of the line's period. */
export async function invoiceDetail(db: DbOrTx, studioId: string, invoiceId: string) {
  const [row] = await db.select().from(invoices).where(and(eq(invoices.id, invoiceId), eq(invoices.studioId, studioId)));
  if (!row) throw notFound("Invoice");
  const [account] = await db.select().from(studioBilling).where(eq(studioBilling.studioId, studioId));
  const lines = [];
  if (row.kind === "pack") {
    // A pack purchase's invoice: its minutes were credited by the purchase entry, not metered, so there is no overage to reconcile.
    return { invoice: invoiceView(row), lines: row.lines.map((line) => ({ ...line, ledgerMs: 0, differenceMs: 0, reconciled: true, entries: [] })), reconciled: true };
  }
  const billedLate = await lateBilledKeys(db, studioId);
  for (const line of row.lines) {
    const entries = line.meterIdentifier
      ? await lateEntry(db, studioId, line.meterIdentifier)
      : await overageEntriesIn(db, studioId, new Date(line.periodStart * 1000), new Date(line.periodEnd * 1000), account?.subscriptionStartedAt ?? null, billedLate);
    const ledgerMs = entries.reduce((sum, e) => sum + e.overageMs, 0);
    lines.push({
      ...line,
      ledgerMs,
      differenceMs: line.quantityMs - ledgerMs,
      reconciled: line.quantityMs === ledgerMs,
      entries: entries.map((e) => ({ ...e, createdAt: e.createdAt.toISOString() })),
    });
  }
  return { invoice: invoiceView(row), lines, reconciled: lines.every((l) => l.reconciled) };
}

/**
 * Overage the app has delivered to Stripe's meter for a studio with event times in [start, end)
 * (unix s): the meter events of the outbox marked delivered, timed as deliverMeterEvent times them.
 */
async function deliveredMeterMs(db: DbOrTx, studioId: string, start: number, end: number): Promise<number> {
  const [account] = await db.select().from(studioBilling).where(eq(studioBilling.studioId, studioId));
  const floor = account?.subscriptionStartedAt ? Math.floor(account.subscriptionStartedAt.getTime() / 1000) : 0;
  const at = sql`greatest((${outbox.payload}->>'timestamp')::bigint, ${floor})`;
  const [row] = await db
    .select({ total: sql<string | null>`coalesce(sum((${outbox.payload}->>'valueMs')::bigint), 0)` })
    .from(outbox)
    // Late usage went to an invoice item, not the meter (it is counted on its own line: lateMeterMs).
    .where(and(eq(outbox.studioId, studioId), eq(outbox.kind, METER_EVENT_KIND), eq(outbox.status, "delivered"), sql`${outbox.payload}->>'lateInvoiceItem' is null`, sql`${at} >= ${start}`, sql`${at} < ${end}`));
  return Number(row?.total ?? 0);
}

/** Overage of one chunk delivered to Stripe late, as an invoice item (its outbox row, by ledger key). */
async function lateMeterMs(db: DbOrTx, studioId: string, identifier: string): Promise<number> {
  const [row] = await db
    .select({ total: sql<string | null>`coalesce(sum((${outbox.payload}->>'valueMs')::bigint), 0)` })
    .from(outbox)
    .where(and(eq(outbox.studioId, studioId), eq(outbox.kind, METER_EVENT_KIND), eq(outbox.status, "delivered"), sql`${outbox.payload}->>'identifier' = ${identifier}`, sql`${outbox.payload}->>'lateInvoiceItem' is not null`));
  return Number(row?.total ?? 0);
}

/**
 * The platform's money view: per studio and invoiced period, the ledger's overage against what was
 * delivered to Stripe's meter against the quantity Stripe invoiced; and revenue per UTC month (pack purchases and invoiced overage, cents).
 */
export async function platformFinance(db: DbOrTx) {
  const rows = await db.select({ invoice: invoices, studioName: studios.name }).from(invoices).innerJoin(studios, eq(studios.id, invoices.studioId)).orderBy(desc(invoices.periodEnd));
  const periods = [];
  for (const { invoice, studioName } of rows) {
    if (invoice.kind === "pack") continue; // pack revenue is counted from the ledger's purchase entries below
    const detail = await invoiceDetail(db, invoice.studioId, invoice.id);
    const ledgerMs = detail.lines.reduce((s, l) => s + l.ledgerMs, 0);
    let meteredMs = 0;
    for (const line of invoice.lines) meteredMs += line.meterIdentifier ? await lateMeterMs(db, invoice.studioId, line.meterIdentifier) : await deliveredMeterMs(db, invoice.studioId, line.periodStart, line.periodEnd);
    periods.push({
      studioId: invoice.studioId,
      studioName,
      invoiceId: invoice.id,
      number: invoice.number,
      status: invoice.status,
      periodStart: invoice.periodStart.toISOString(),
      periodEnd: invoice.periodEnd.toISOString(),
      ledgerMs,
      meteredMs,
      invoicedMs: detail.lines.reduce((s, l) => s + l.quantityMs, 0),
      totalCents: invoice.totalCents,
      reconciled: detail.reconciled && meteredMs === ledgerMs,
    });
  }
  const month = sql<string>`to_char(${ledgerEntries.createdAt} at time zone 'UTC', 'YYYY-MM')`;
  const packs = await db
    .select({ month, cents: sql<string>`sum(${ledgerEntries.amountCents})` })
    .from(ledgerEntries)
    .where(eq(ledgerEntries.kind, "purchase"))
    .groupBy(month);
  const byMonth = new Map<string, { month: string; packCents: number; overageCents: number }>();
  for (const p of packs) byMonth.set(p.month, { month: p.month, packCents: Number(p.cents), overageCents: 0 });
  for (const { invoice } of rows) {
    if (invoice.status === "draft" || invoice.status === "void" || invoice.kind === "pack") continue;
    const key = (invoice.finalizedAt ?? invoice.periodEnd).toISOString().slice(0, 7);
    const entry = byMonth.get(key) ?? { month: key, packCents: 0, overageCents: 0 };
    entry.overageCents += invoice.totalCents;
    byMonth.set(key, entry);
  }
  return { periods, revenueByMonth: [...byMonth.values()].sort((a, b) => a.month.localeCompare(b.month)) };
}
