/**
 * The studio home's read model: where things stand for one studio, shaped by the reader's role.
 * Compute (balance, this month against the cap, the daily trend), sweeps running now, the latest
 * finished sweeps with their verdict counts, catalogue checks with their pairs at risk, and for the
 * people who handle money the next invoice's running total. Every query is scoped by studio id.
 */
import "server-only";
import { and, desc, eq, gte, inArray, sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { catalogueChecks, catalogues, invoices, ledgerEntries, snapshots, memberships, sweeps, type StudioRole } from "@/db/schema";
import { OVERAGE_CENTS_PER_MINUTE, OVERAGE_UNIT_AMOUNT_DECIMAL } from "@/lib/billing/packs";
import { checkSettingsSchema, pairMatrix } from "@/lib/catalogues/check";
import { balanceMs, monthlyOverageMs, monthlyUsageMs } from "@/lib/quotas/standing";
import { verdictCountsFrom, storedCells } from "@/lib/queue/views";
import { effectiveQuotas, monthOf } from "@/lib/quotas/plan";
import type { VerdictCounts } from "@/lib/sweeps/results";

/** Days of daily usage the trend shows. */
export const TREND_DAYS = 30;
const LATEST_SWEEPS = 6;
const LATEST_CHECKS = 3;

export interface OverviewSweep {
  id: string;
  name: string;
  status: string;
  /** Why a paused or waiting sweep is not running now (a run limit, a free slot, the demo's pace); null otherwise. */
  reason: string | null;
  cells: number;
  cellsDone: number;
  createdAt: string;
  finishedAt: string | null;
  verdictCounts: VerdictCounts;
}

export interface OverviewCheck {
  id: string;
  catalogueId: string;
  catalogueName: string;
  catalogueVersion: number;
  sweepId: string;
  status: string;
  createdAt: string;
  /** Pairs whose worst verdict is not stable; null until the check is done. */
  pairsAtRisk: string[] | null;
  pairs: number;
}

export interface StudioOverview {
  role: StudioRole | null;
  compute: {
    balanceMs: number;
    month: { key: string; usedMs: number; capMs: number | null; overageMs: number };
    previousMonthUsedMs: number;
    /** Usage per UTC day over the last TREND_DAYS days, oldest first, days without usage as 0. */
    trend: { day: string; usedMs: number }[];
  };
  running: OverviewSweep[];
  latest: OverviewSweep[];
  checks: OverviewCheck[];
  counts: { sweeps: number; catalogues: number; snapshots: number; members: number };
  /** Owners and finance only: the overage invoice of the month so far, integer cents before tax. */
  nextInvoice: { periodKey: string; overageMs: number; runningTotalCents: number; centsPerMinute: number; lastInvoice: { id: string; number: string | null; totalCents: number; periodEnd: string } | null } | null;
}

/**
 * The overage price per ms is a decimal of cents (lib/billing/packs.ts); Stripe rounds the line to
 * whole cents. Integer arithmetic: cents = round(ms × 15 / 100 000).
 */
export function overageCents(overageMs: number): number {
  const [whole, fraction = ""] = OVERAGE_UNIT_AMOUNT_DECIMAL.split(".");
  const denominator = 10 ** fraction.length;
  const numerator = Number(whole) * denominator + Number(fraction || "0");
  return Math.round((overageMs * numerator) / denominator);
}

function sweepRow(row: typeof sweeps.$inferSelect): OverviewSweep {
  return {
    id: row.id,
    name: row.name,
    status: row.status,
    reason: row.reason,
    cells: row.cells,
    cellsDone: row.cellsDone,
    createdAt: row.createdAt.toISOString(),
    finishedAt: row.finishedAt?.toISOString() ?? null,
    verdictCounts: verdictCountsFrom(row.verdictCounts),
  };
}

async function dailyTrend(db: Db, studioId: string, now: Date): Promise<{ day: string; usedMs: number }[]> {
  const since = new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), now.getUTCDate() - (TREND_DAYS - 1)));
  const day = sql<string>`to_char(${ledgerEntries.createdAt} at time zone 'UTC', 'YYYY-MM-DD')`;
  const rows = await db
    .select({ day, usedMs: sql<string>`sum(${ledgerEntries.overageMs} - ${ledgerEntries.computeMs})` })
    .from(ledgerEntries)
    .where(and(eq(ledgerEntries.studioId, studioId), eq(ledgerEntries.kind, "usage"), gte(ledgerEntries.createdAt, since)))
    .groupBy(day);
  const byDay = new Map(rows.map((row) => [row.day, Number(row.usedMs)]));
  const trend: { day: string; usedMs: number }[] = [];
  for (let i = 0; i < TREND_DAYS; i++) {
    const key = new Date(since.getTime() + i * 86_400_000).toISOString().slice(0, 10);
    trend.push({ day: key, usedMs: byDay.get(key) ?? 0 });
  }
  return trend;
}

async function latestChecks(db: Db, studioId: string): Promise<OverviewCheck[]> {
  const rows = await db
    .select({ check: catalogueChecks, catalogue: catalogues, sweep: sweeps })
    .from(catalogueChecks)
    .innerJoin(catalogues, eq(catalogues.id, catalogueChecks.catalogueId))
    .innerJoin(sweeps, eq(sweeps.id, catalogueChecks.sweepId))
    .where(and(eq(catalogueChecks.studioId, studioId), eq(catalogues.studioId, studioId)))
    .orderBy(desc(catalogueChecks.createdAt), desc(catalogueChecks.id))
    .limit(LATEST_CHECKS);
  const checks: OverviewCheck[] = [];
  for (const { check, catalogue, sweep } of rows) {
    const objects = catalogue.objects;
    let pairsAtRisk: string[] | null = null;
    let pairs = (objects.length * (objects.length + 1)) / 2;
    if (sweep.status === "done") {
      const matrix = pairMatrix(objects, checkSettingsSchema.parse(check.settings), await storedCells(db, sweep));
      pairsAtRisk = matrix.atRisk;
      pairs = matrix.pairs.length;
    }
    checks.push({
      id: check.id,
      catalogueId: catalogue.id,
      catalogueName: catalogue.name,
      catalogueVersion: catalogue.version,
      sweepId: sweep.id,
      status: sweep.status,
      createdAt: check.createdAt.toISOString(),
      pairsAtRisk,
      pairs,
    });
  }
  return checks;
}

export async function studioOverview(db: Db, studioId: string, role: StudioRole | null, now: Date = new Date()): Promise<StudioOverview> {
  const quotas = await effectiveQuotas(db, studioId);
  const month = monthOf(now);
  const previous = new Date(month.start.getTime() - 1);
  const overageMs = await monthlyOverageMs(db, studioId, now);
  const running = await db
    .select()
    .from(sweeps)
    .where(and(eq(sweeps.studioId, studioId), inArray(sweeps.status, ["queued", "running", "paused"])))
    .orderBy(desc(sweeps.createdAt), desc(sweeps.id));
  const latest = await db
    .select()
    .from(sweeps)
    .where(and(eq(sweeps.studioId, studioId), eq(sweeps.status, "done")))
    .orderBy(desc(sweeps.finishedAt), desc(sweeps.id))
    .limit(LATEST_SWEEPS);
  const count = async (table: typeof sweeps | typeof catalogues | typeof snapshots) => {
    const [row] = await db.select({ n: sql<string>`count(*)` }).from(table).where(eq(table.studioId, studioId));
    return Number(row?.n ?? 0);
  };
  const [memberRow] = await db.select({ n: sql<string>`count(*)` }).from(memberships).where(eq(memberships.studioId, studioId));
  let nextInvoice: StudioOverview["nextInvoice"] = null;
  if (role === "owner" || role === "finance") {
    // The last overage invoice: pack purchases have their own invoices, which are not "the next invoice"'s predecessor.
    const [last] = await db
      .select()
      .from(invoices)
      .where(and(eq(invoices.studioId, studioId), eq(invoices.kind, "overage")))
      .orderBy(desc(invoices.periodEnd), desc(invoices.createdAt))
      .limit(1);
    nextInvoice = {
      periodKey: month.key,
      overageMs,
      runningTotalCents: overageCents(overageMs),
      centsPerMinute: OVERAGE_CENTS_PER_MINUTE,
      lastInvoice: last ? { id: last.id, number: last.number, totalCents: last.totalCents, periodEnd: last.periodEnd.toISOString() } : null,
    };
  }
  return {
    role,
    compute: {
      balanceMs: await balanceMs(db, studioId),
      month: { key: month.key, usedMs: await monthlyUsageMs(db, studioId, now), capMs: quotas.monthlyComputeMs, overageMs },
      previousMonthUsedMs: await monthlyUsageMs(db, studioId, previous),
      trend: await dailyTrend(db, studioId, now),
    },
    running: running.map(sweepRow),
    latest: latest.map(sweepRow),
    checks: await latestChecks(db, studioId),
    counts: { sweeps: await count(sweeps), catalogues: await count(catalogues), snapshots: await count(snapshots), members: Number(memberRow?.n ?? 0) },
    nextInvoice,
  };
}
