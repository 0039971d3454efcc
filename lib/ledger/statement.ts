/**
 * The ledger as finance reads it: usage grouped by sweep (one row per sweep instead of one per
 * chunk, the chunks on demand), and exports whose column names carry both the machine unit
 * (integer ms, integer cents) and the unit the billing page shows (minutes, US dollars).
 * Read-only queries; nothing here writes the ledger.
 */
import "server-only";
import { and, asc, desc, eq, gte, lt, sql, type SQL } from "drizzle-orm";
import { z } from "@/lib/zod";
import type { DbOrTx } from "@/db/client";
import { ledgerEntries, sweeps } from "@/db/schema";
import { LEDGER_KINDS } from "./kinds";
import { parseWith } from "@/lib/api/body";
import { csvCell } from "@/lib/csv";
import { formatMinutes } from "@/lib/billing/format";
import { notFound } from "@/lib/errors";

const dateParam = z.iso.date("must be a date YYYY-MM-DD");
const filters = {
  kind: z.enum(LEDGER_KINDS).optional(),
  from: dateParam.optional(),
  to: dateParam.optional(),
};

export const LEDGER_GROUP_SORTS = ["lastAt", "kind", "computeMs", "overageMs", "amountCents"] as const;
export const ledgerGroupsQuerySchema = z
  .object({
    ...filters,
    sort: z.enum(LEDGER_GROUP_SORTS).default("lastAt"),
    order: z.enum(["asc", "desc"]).default("desc"),
    page: z.coerce.number().int("must be a whole number").min(1, "must be at least 1").max(100_000, "must be at most 100000").default(1),
    pageSize: z.coerce.number().int("must be a whole number").min(1, "must be at least 1").max(200, "must be at most 200").default(20),
  })
  .strict();
export type LedgerGroupsQuery = z.infer<typeof ledgerGroupsQuerySchema>;

export const ledgerExportQuerySchema = z
  .object({
    ...filters,
    format: z.enum(["csv", "json"]).default("csv"),
    /** entry: every ledger entry (each chunk); sweep: one row per sweep, other entries as they are. */
    group: z.enum(["entry", "sweep"]).default("entry"),
  })
  .strict();
export type LedgerExportQuery = z.infer<typeof ledgerExportQuerySchema>;

export const parseLedgerGroupsQuery = (url: URL) => parseWith(ledgerGroupsQuerySchema, Object.fromEntries(url.searchParams));
export const parseLedgerExportQuery = (url: URL) => parseWith(ledgerExportQuerySchema, Object.fromEntries(url.searchParams));

function filterOf(studioId: string, q: { kind?: string; from?: string; to?: string }): SQL {
  const parts: SQL[] = [eq(ledgerEntries.studioId, studioId)];
  if (q.kind) parts.push(eq(ledgerEntries.kind, q.kind as (typeof LEDGER_KINDS)[number]));
  if (q.from) parts.push(gte(ledgerEntries.createdAt, new Date(`${q.from}T00:00:00Z`)));
  // `to` is inclusive: the whole UTC day.
  if (q.to) parts.push(lt(ledgerEntries.createdAt, new Date(new Date(`${q.to}T00:00:00Z`).getTime() + 86_400_000)));
  return and(...parts)!;
}

// A sweep's usage entries form one group; every other entry (purchases, grants, refunds, usage of a
// deleted sweep) is a group of its own.
const groupKey = sql<string>`case when ${ledgerEntries.sweepId} is not null and ${ledgerEntries.kind} = 'usage' then 'sweep:' || ${ledgerEntries.sweepId} else 'entry:' || ${ledgerEntries.id}::text end`;
const agg = {
  group: groupKey,
  kind: sql<string>`min(${ledgerEntries.kind})`,
  sweepId: sql<string | null>`min(${ledgerEntries.sweepId})`,
  sweepName: sql<string | null>`min(${sweeps.name})`,
  entries: sql<string>`count(*)`,
  chunks: sql<string>`count(${ledgerEntries.chunkIndex})`,
  computeMs: sql<string>`sum(${ledgerEntries.computeMs})`,
  overageMs: sql<string>`sum(${ledgerEntries.overageMs})`,
  amountCents: sql<string>`sum(${ledgerEntries.amountCents})`,
  firstAt: sql<Date | string>`min(${ledgerEntries.createdAt})`,
  lastAt: sql<Date | string>`max(${ledgerEntries.createdAt})`,
  memo: sql<string | null>`case when count(*) = 1 then min(${ledgerEntries.memo}) else null end`,
};
const SORT_EXPR: Record<(typeof LEDGER_GROUP_SORTS)[number], SQL> = {
  lastAt: sql`max(${ledgerEntries.createdAt})`,
  kind: sql`min(${ledgerEntries.kind})`,
  computeMs: sql`sum(${ledgerEntries.computeMs})`,
  overageMs: sql`sum(${ledgerEntries.overageMs})`,
  amountCents: sql`sum(${ledgerEntries.amountCents})`,
};

const iso = (v: Date | string) => (v instanceof Date ? v : new Date(v)).toISOString();

export interface LedgerGroup {
  /** "sweep:<id>" for a sweep's usage, "entry:<id>" for an entry on its own. */
  group: string;
  kind: string;
  sweepId: string | null;
  sweepName: string | null;
  /** Ledger entries in the group; chunks: those that name a chunk. */
  entries: number;
  chunks: number;
  computeMs: number;
  overageMs: number;
  amountCents: number;
  firstAt: string;
  lastAt: string;
  /** The entry's memo when the group is one entry; a sweep's chunks keep theirs in the chunk detail. */
  memo: string | null;
}

async function groupRows(db: DbOrTx, studioId: string, q: { kind?: string; from?: string; to?: string }, order: SQL[], page?: { limit: number; offset: number }): Promise<LedgerGroup[]> {
  const base = db.select(agg).from(ledgerEntries).leftJoin(sweeps, eq(sweeps.id, ledgerEntries.sweepId)).where(filterOf(studioId, q)).groupBy(groupKey).orderBy(...order);
  const rows = page ? await base.limit(page.limit).offset(page.offset) : await base;
  return rows.map((r) => ({
    group: r.group,
    kind: r.kind,
    sweepId: r.sweepId,
    sweepName: r.sweepId ? (r.sweepName ?? "(deleted sweep)") : null,
    entries: Number(r.entries),
    chunks: Number(r.chunks),
    computeMs: Number(r.computeMs),
    overageMs: Number(r.overageMs),
    amountCents: Number(r.amountCents),
    firstAt: iso(r.firstAt),
    lastAt: iso(r.lastAt),
    memo: r.memo,
  }));
}

/** One page of the ledger grouped by sweep, with the number of groups for paging. */
export async function ledgerGroupsPage(db: DbOrTx, studioId: string, q: LedgerGroupsQuery) {
  const expr = SORT_EXPR[q.sort];
  const order = q.order === "asc" ? [asc(expr), asc(groupKey)] : [desc(expr), desc(groupKey)];
  const groups = await groupRows(db, studioId, q, order, { limit: q.pageSize, offset: (q.page - 1) * q.pageSize });
  const [total] = await db.select({ n: sql<string>`count(distinct ${groupKey})` }).from(ledgerEntries).where(filterOf(studioId, q));
  return { groups, page: q.page, pageSize: q.pageSize, total: Number(total.n) };
}

export interface LedgerEntryRow {
  id: number;
  createdAt: string;
  kind: string;
  sweepId: string | null;
  sweepName: string | null;
  chunkIndex: number | null;
  computeMs: number;
  overageMs: number;
  amountCents: number;
  memo: string;
}

async function entryRows(db: DbOrTx, where: SQL, order: SQL[]): Promise<LedgerEntryRow[]> {
  const rows = await db.select({ entry: ledgerEntries, sweepName: sweeps.name }).from(ledgerEntries).leftJoin(sweeps, eq(sweeps.id, ledgerEntries.sweepId)).where(where).orderBy(...order);
  return rows.map(({ entry: e, sweepName }) => ({
    id: e.id,
    createdAt: e.createdAt.toISOString(),
    kind: e.kind,
    sweepId: e.sweepId,
    sweepName: e.sweepId ? (sweepName ?? "(deleted sweep)") : null,
    chunkIndex: e.chunkIndex,
    computeMs: e.computeMs,
    overageMs: e.overageMs,
    amountCents: e.amountCents,
    memo: e.memo,
  }));
}

/** The chunk detail of one sweep's group: its usage entries in chunk order. */
export async function sweepLedgerChunks(db: DbOrTx, studioId: string, sweepId: string) {
  const [sweep] = await db.select({ id: sweeps.id, name: sweeps.name }).from(sweeps).where(and(eq(sweeps.id, sweepId), eq(sweeps.studioId, studioId)));
  if (!sweep) throw notFound("Sweep");
  const chunks = await entryRows(db, and(eq(ledgerEntries.studioId, studioId), eq(ledgerEntries.sweepId, sweepId), eq(ledgerEntries.kind, "usage"))!, [asc(ledgerEntries.chunkIndex), asc(ledgerEntries.id)]);
  return { sweepId: sweep.id, sweepName: sweep.name, chunks };
}

/** Integer ms as minutes with two decimals, exactly as the billing page shows them (no thousands separators). */
export const minutesText = (ms: number) => formatMinutes(ms).replaceAll(",", "");
/** Integer cents as US dollars with two decimals (exact: integer arithmetic). */
export function dollarsText(cents: number): string {
  const sign = cents < 0 ? "-" : "";
  const abs = Math.abs(cents);
  return `${sign}${Math.floor(abs / 100)}.${String(abs % 100).padStart(2, "0")}`;
}

/** What each export column holds; the JSON export carries it, the CSV's header names say it. */
export const EXPORT_UNITS: Record<string, string> = {
  compute_ms: "prepaid compute, integer milliseconds (signed: purchases and grants +, usage −)",
  compute_minutes: "the same in minutes, two decimals, as the billing page shows it",
  overage_ms: "compute past the prepaid balance, invoiced monthly, integer milliseconds",
  overage_minutes: "the same in minutes, two decimals",
  amount_cents: "money paid or refunded, integer US cents, before tax",
  amount_usd: "the same in US dollars, two decimals",
};

type Cell = string | number | null;
const ENTRY_COLUMNS = ["id", "created_at", "kind", "sweep_id", "sweep_name", "chunk_index", "compute_ms", "compute_minutes", "overage_ms", "overage_minutes", "amount_cents", "amount_usd", "memo"] as const;
const GROUP_COLUMNS = ["group", "kind", "sweep_id", "sweep_name", "entries", "chunks", "first_at", "last_at", "compute_ms", "compute_minutes", "overage_ms", "overage_minutes", "amount_cents", "amount_usd", "memo"] as const;

const money = (r: { computeMs: number; overageMs: number; amountCents: number }) => ({
  compute_ms: r.computeMs,
  compute_minutes: minutesText(r.computeMs),
  overage_ms: r.overageMs,
  overage_minutes: minutesText(r.overageMs),
  amount_cents: r.amountCents,
  amount_usd: dollarsText(r.amountCents),
});

/** Every matching entry, or one row per sweep, as CSV or JSON; both with units in the column names. */
export async function ledgerExport(db: DbOrTx, studioId: string, q: LedgerExportQuery): Promise<{ body: string; contentType: string; filename: string }> {
  let columns: readonly string[];
  let rows: Record<string, Cell>[];
  if (q.group === "sweep") {
    columns = GROUP_COLUMNS;
    const groups = await groupRows(db, studioId, q, [asc(sql`min(${ledgerEntries.createdAt})`), asc(groupKey)]);
    rows = groups.map((g) => ({ group: g.group, kind: g.kind, sweep_id: g.sweepId, sweep_name: g.sweepName, entries: g.entries, chunks: g.chunks, first_at: g.firstAt, last_at: g.lastAt, ...money(g), memo: g.memo }));
  } else {
    columns = ENTRY_COLUMNS;
    const entries = await entryRows(db, filterOf(studioId, q), [asc(ledgerEntries.createdAt), asc(ledgerEntries.id)]);
    rows = entries.map((e) => ({ id: e.id, created_at: e.createdAt, kind: e.kind, sweep_id: e.sweepId, sweep_name: e.sweepName, chunk_index: e.chunkIndex, ...money(e), memo: e.memo }));
  }
  const filename = `ledger-${q.group === "sweep" ? "by-sweep-" : ""}${studioId}.${q.format}`;
  if (q.format === "json") {
    // Minutes and dollars stay strings: the decimal as shown, never a float's approximation of it.
    const units = Object.fromEntries(columns.filter((c) => c in EXPORT_UNITS).map((c) => [c, EXPORT_UNITS[c]]));
    return { body: JSON.stringify({ studioId, group: q.group, columns, units, rows }, null, 2) + "\n", contentType: "application/json; charset=utf-8", filename };
  }
  const lines = rows.map((r) => columns.map((c) => csvCell(r[c] ?? null)).join(","));
  return { body: [columns.join(","), ...lines].join("\r\n") + "\r\n", contentType: "text/csv; charset=utf-8", filename };
}
