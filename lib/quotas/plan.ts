/**
 * The plan: default limits of every studio, and the effective limits of one studio (its
 * studio_quotas row over these defaults). Admins change a studio's row; nothing else does.
 */
import "server-only";
import { eq } from "drizzle-orm";
import type { DbOrTx } from "@/db/client";
import { studioQuotas } from "@/db/schema";
import { SPEC_LIMITS } from "@/lib/sweeps/parameters";

export interface Quotas {
  /** Compute per calendar month (UTC), integer ms. */
  monthlyComputeMs: number;
  /** Sweeps running at once; further sweeps wait in the queue. */
  maxRunningSweeps: number;
  maxCellsPerSweep: number;
  maxStepsPerCell: number;
  maxBodies: number;
  /** Whether usage past the prepaid balance is metered and invoiced monthly. */
  overageAllowed: boolean;
  /** The most overage one calendar month may accrue, integer ms. */
  overageCapMs: number;
}

/**
 * Overage as stored: permitted by a platform admin (null = the plan default) and switched on by the
 * studio's owner (null = on, as before owners had a say). It accrues only when both hold (and no
 * unpaid invoice holds it off: lib/billing/grace.ts).
 */
export function storedOverage(allowed: boolean | null | undefined, on: boolean | null | undefined): { permitted: boolean; on: boolean; both: boolean } {
  const permitted = allowed ?? PLAN_DEFAULTS.overageAllowed;
  const switchedOn = on !== false;
  return { permitted, on: switchedOn, both: permitted && switchedOn };
}

/** Defaults of the one plan we sell. The per-sweep limits can only be lowered below the engine's own (SPEC_LIMITS). */
export const PLAN_DEFAULTS: Readonly<Quotas> = {
  monthlyComputeMs: 3_000 * 60_000,
  maxRunningSweeps: 2,
  maxCellsPerSweep: SPEC_LIMITS.maxCellsPerSweep,
  maxStepsPerCell: SPEC_LIMITS.maxStepsPerCell,
  maxBodies: SPEC_LIMITS.maxBodies,
  overageAllowed: false,
  overageCapMs: 600 * 60_000,
};

/** The studio's limits: its overrides where set, else the plan's. */
export async function effectiveQuotas(db: DbOrTx, studioId: string): Promise<Quotas> {
  const [row] = await db.select().from(studioQuotas).where(eq(studioQuotas.studioId, studioId));
  return {
    monthlyComputeMs: row?.monthlyComputeMs ?? PLAN_DEFAULTS.monthlyComputeMs,
    maxRunningSweeps: row?.maxRunningSweeps ?? PLAN_DEFAULTS.maxRunningSweeps,
    maxCellsPerSweep: row?.maxCellsPerSweep ?? PLAN_DEFAULTS.maxCellsPerSweep,
    maxStepsPerCell: row?.maxStepsPerCell ?? PLAN_DEFAULTS.maxStepsPerCell,
    maxBodies: row?.maxBodies ?? PLAN_DEFAULTS.maxBodies,
    overageAllowed: storedOverage(row?.overageAllowed, row?.overageOn).both,
    overageCapMs: row?.overageCapMs ?? PLAN_DEFAULTS.overageCapMs,
  };
}

/** The calendar month (UTC) an instant falls in, as "YYYY-MM", and its bounds. */
export function monthOf(at: Date): { key: string; start: Date; end: Date } {
  const start = new Date(Date.UTC(at.getUTCFullYear(), at.getUTCMonth(), 1));
  const end = new Date(Date.UTC(at.getUTCFullYear(), at.getUTCMonth() + 1, 1));
  return { key: start.toISOString().slice(0, 7), start, end };
}
