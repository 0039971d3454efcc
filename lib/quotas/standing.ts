/**
 * A studio's standing — its balance, this month's usage and overage, its monthly cap, the compute
 * its unfinished sweeps reserve and its running sweeps — read from the one place that derives it:
 * the SQL function kickdrift_studio_standing (drizzle/0020_studio_standing.sql). The queue's chunk
 * recorder (kickdrift_record_chunk) selects from the same function, so TypeScript and the queue's
 * PL/pgSQL can no longer disagree on what a studio has left. And the debit rule that spends it,
 * `chunkDebit`, once.
 */
import "server-only";
import { sql, type SQL } from "drizzle-orm";
import type { DbOrTx } from "@/db/client";
import { queryRows, sqlNumber } from "@/db/rows";
import { STUDIO_STATUSES, type StudioStatus } from "@/db/schema";
import { overageHeldSql } from "@/lib/billing/grace";
import { z } from "@/lib/zod";
import { PLAN_DEFAULTS, monthOf, storedOverage, type Quotas } from "./plan";

/** Where a studio stands against its limits (integer ms throughout). */
export interface Standing {
  studioStatus: StudioStatus;
  quotas: Quotas;
  balanceMs: number;
  monthKey: string;
  /** Usage this calendar month (UTC), prepaid and overage. */
  monthUsedMs: number;
  /** Overage accrued this calendar month. */
  monthOverageMs: number;
  /** Compute reserved by the studio's unfinished sweeps (the unreleased part of their ceilings). */
  reservedMs: number;
  runningSweeps: number;
}

/** `kickdrift_studio_standing(…)` for studio `studioId` (a SQL value) in the calendar month (UTC) of `at`, to select from. */
function standingFrom(studioId: SQL | string, at: Date): SQL {
  const { start, end } = monthOf(at);
  return sql`kickdrift_studio_standing(${studioId}::text, ${start.toISOString()}::timestamptz, ${end.toISOString()}::timestamptz, ${PLAN_DEFAULTS.monthlyComputeMs}::bigint)`;
}

const ledgerRow = z.object({ balance_ms: sqlNumber, month_used_ms: sqlNumber, month_overage_ms: sqlNumber });

/** The ledger's part of the standing: balance, and usage and overage in the calendar month (UTC) of `at`; zeros for a studio that does not exist. */
async function ledgerStanding(db: DbOrTx, studioId: string, at: Date) {
  const [row] = await queryRows(db, sql`select s.balance_ms, s.month_used_ms, s.month_overage_ms from ${standingFrom(studioId, at)} s`, ledgerRow);
  return { balanceMs: row?.balance_ms ?? 0, monthUsedMs: row?.month_used_ms ?? 0, monthOverageMs: row?.month_overage_ms ?? 0 };
}

/** Compute balance of a studio: the sum of its ledger entries (integer ms, may be negative). */
export async function balanceMs(db: DbOrTx, studioId: string): Promise<number> {
  return (await ledgerStanding(db, studioId, new Date())).balanceMs;
}

/**
 * Compute a studio used in the calendar month (UTC) that `at` falls in: prepaid and overage
 * alike, from its usage entries (integer ms).
 */
export async function monthlyUsageMs(db: DbOrTx, studioId: string, at: Date = new Date()): Promise<number> {
  return (await ledgerStanding(db, studioId, at)).monthUsedMs;
}

/** Overage a studio accrued in the calendar month (UTC) that `at` falls in (integer ms). */
export async function monthlyOverageMs(db: DbOrTx, studioId: string, at: Date = new Date()): Promise<number> {
  return (await ledgerStanding(db, studioId, at)).monthOverageMs;
}

const nullableNumber = sqlNumber.nullable();
const standingRow = z.object({
  status: z.enum(STUDIO_STATUSES),
  balance_ms: sqlNumber,
  month_used_ms: sqlNumber,
  month_overage_ms: sqlNumber,
  cap_ms: sqlNumber,
  reserved_ms: sqlNumber,
  running_sweeps: sqlNumber,
  overage_held: z.boolean(),
  max_running_sweeps: nullableNumber,
  max_cells_per_sweep: nullableNumber,
  max_steps_per_cell: nullableNumber,
  max_bodies: nullableNumber,
  overage_allowed: z.boolean().nullable(),
  overage_on: z.boolean().nullable(),
  overage_cap_ms: nullableNumber,
});

export interface StandingOptions {
  /** Lock the studio row first (inside a transaction: the submit check, a debit). */
  lock?: boolean;
  /** When the overdue-invoice grace period is judged: default `at`; null for the database's now(). */
  graceAt?: Date | null;
}

/**
 * One query: the studio's status, quotas, and its standing in the calendar month (UTC) of `at`;
 * null when the studio does not exist.
 */
export async function readStanding(db: DbOrTx, studioId: string, at: Date, options: StandingOptions = {}): Promise<Standing | null> {
  // The lock is its own statement, taken before the standing is read: in PostgreSQL's READ COMMITTED
  // a statement that waits for a row lock re-reads that row afterwards but not its subqueries, so
  // one "select … for update" would sum the ledger and the reserved sweeps as they were before the
  // transaction it waited for committed (two concurrent submits could then both pass a limit).
  if (options.lock) await db.execute(sql`select id from studios where id = ${studioId} for update`);
  const graceAt = options.graceAt === undefined ? at : options.graceAt;
  const [row] = await queryRows(
    db,
    sql`
    select s.*, ${overageHeldSql(sql`${studioId}::text`, graceAt ?? undefined)} as overage_held,
      q.max_running_sweeps, q.max_cells_per_sweep, q.max_steps_per_cell, q.max_bodies, q.overage_allowed, q.overage_on, q.overage_cap_ms
    from ${standingFrom(studioId, at)} s left join studio_quotas q on q.studio_id = ${studioId}`,
    standingRow,
  );
  if (!row) return null;
  return {
    studioStatus: row.status,
    quotas: {
      monthlyComputeMs: row.cap_ms,
      maxRunningSweeps: row.max_running_sweeps ?? PLAN_DEFAULTS.maxRunningSweeps,
      maxCellsPerSweep: row.max_cells_per_sweep ?? PLAN_DEFAULTS.maxCellsPerSweep,
      maxStepsPerCell: row.max_steps_per_cell ?? PLAN_DEFAULTS.maxStepsPerCell,
      maxBodies: row.max_bodies ?? PLAN_DEFAULTS.maxBodies,
      // Permitted by an admin, switched on by the owner (lib/billing/overage-switch.ts), and not held
      // off by an invoice unpaid past its grace period (lib/billing/overdue.ts).
      overageAllowed: storedOverage(row.overage_allowed, row.overage_on).both && !row.overage_held,
      overageCapMs: row.overage_cap_ms ?? PLAN_DEFAULTS.overageCapMs,
    },
    balanceMs: row.balance_ms,
    monthKey: monthOf(at).key,
    monthUsedMs: row.month_used_ms,
    monthOverageMs: row.month_overage_ms,
    reservedMs: row.reserved_ms,
    runningSweeps: row.running_sweeps,
  };
}

/** Overage the studio may still accrue this month (0 when overage is not allowed). */
export function overageHeadroomMs(s: Standing): number {
  return s.quotas.overageAllowed ? Math.max(0, s.quotas.overageCapMs - s.monthOverageMs) : 0;
}

export interface ChunkDebit {
  /** Taken from the prepaid balance. */
  prepaidMs: number;
  /** Metered past the balance (invoiced monthly). */
  overageMs: number;
  /** Not billed: past the monthly cap, or past the balance with no overage headroom. */
  unbilledMs: number;
}

/**
 * The debit rule: a chunk's `computeMs` is billed only up to what is left of the monthly cap;
 * of that, prepaid minutes first (as far as the balance is positive), then overage as far as the
 * month's overage headroom goes; the rest is not billed. kickdrift_record_chunk debits in place
 * only where this gives prepaidMs = computeMs (balance and cap both far away).
 */
export function chunkDebit(s: Standing, computeMs: number): ChunkDebit {
  const billable = Math.min(computeMs, Math.max(0, s.quotas.monthlyComputeMs - s.monthUsedMs));
  const prepaidMs = Math.min(billable, Math.max(0, s.balanceMs));
  const overageMs = Math.min(billable - prepaidMs, overageHeadroomMs(s));
  return { prepaidMs, overageMs, unbilledMs: computeMs - prepaidMs - overageMs };
}
