/**
 * Recording a finished chunk, atomically: lock the studio (the one debit writer per studio at a
 * time, as lib/billing/usage.ts does) and the sweep, mark the chunk done (only if its runner still
 * holds it and the sweep was not stopped), upsert its results row, add the chunk to the sweep's
 * counters and insert its debit `usage:{sweepId}:{chunkIndex}` (idempotent, so a chunk run twice
 * after a lost lease is billed once).
 *
 * Far from every limit (balance well above the low-balance mark, usage well under the monthly cap:
 * the usual case) that is one statement on its own, kickdrift_record_chunk, which debits in place:
 * the debit rule (lib/quotas/standing.ts chunkDebit) would take the whole chunk from the balance, and
 * the function reads the balance, usage and cap from kickdrift_studio_standing, as that module does.
 * Near a limit the chunk is recorded in a transaction whose debit goes through lib/billing/usage.ts
 * (prepaid first, overage metered through the outbox, nothing billed past a cap), and the cap alerts
 * are checked after it.
 */
import "server-only";
import { eq, sql } from "drizzle-orm";
import type { Db, DbOrTx } from "@/db/client";
import { sweeps } from "@/db/schema";
import { recordChunkUsage } from "@/lib/billing/usage";
import { LOW_BALANCE_MS } from "@/lib/billing/packs";
import { usageKey } from "@/lib/ledger/ledger";
import { pokeOutbox } from "@/lib/outbox/process";
import { monthOf, PLAN_DEFAULTS } from "@/lib/quotas/plan";
import { CAP_ALERT_THRESHOLDS, sendCapAlerts } from "@/lib/quotas/enforce";
import type { ChunkOutcome } from "@/lib/sweeps/chunk-task";
import { WORK_UNITS_PER_BILLED_MS } from "@/lib/sweeps/metering";
import type { SweepStatus } from "@/lib/sweeps/status";
import { discardChunk } from "./failures";
import { recordChunk } from "./sql-functions";
import type { SweepInfo } from "./sweep-info";

/** The chunk as its runner holds it. */
interface HeldChunk {
  id: number;
  sweepId: string;
  chunkIndex: number;
  cellCount: number;
}

export interface Landed {
  recorded: boolean;
  /** Recorded and its sweep is now done. */
  finished: boolean;
}

/**
 * Record `chunk`'s run (its blob already stored) for runner `ownerId`. Not recorded when the runner
 * lost the lease or the sweep was stopped (then the chunk is discarded, unbilled).
 */
export async function recordLanded(
  db: Db,
  ownerId: string,
  info: SweepInfo,
  chunk: HeldChunk,
  outcome: ChunkOutcome,
  tallyByCode: readonly number[],
  blob: { bytes: number; location: string | null; data: Uint8Array | null },
  /** Called when the debit went the careful way (near a limit): the run limits are due before the next claim. */
  onNearLimit: () => void,
): Promise<Landed> {
  const memo = `Sweep ${chunk.sweepId} chunk ${chunk.chunkIndex} (${outcome.cellCount} cells)`;
  const call = (handle: DbOrTx, onlyIfEasy: boolean) =>
    recordChunk(handle, {
      owner: ownerId,
      chunkId: chunk.id,
      sweepId: chunk.sweepId,
      studioId: info.studioId,
      cellsInBlob: chunk.cellCount, // a recorded chunk holds all its cells (cached ones merged in)
      cellsRun: outcome.cellCount,
      workUnits: outcome.workUnits,
      wallMs: outcome.wallMs,
      unitsPerMs: WORK_UNITS_PER_BILLED_MS,
      blob,
      tallyByCode,
      key: usageKey(chunk.sweepId, chunk.chunkIndex),
      memo,
      month: monthOf(new Date()),
      lowBalanceMs: LOW_BALANCE_MS,
      defaultCapMs: PLAN_DEFAULTS.monthlyComputeMs,
      firstAlertPercent: Math.min(...CAP_ALERT_THRESHOLDS),
      onlyIfEasy,
    });
  const fast = await call(db, true);
  let landed: { recorded: boolean; sweepStatus: SweepStatus | null; newStatus: SweepStatus | null; careful: boolean };
  if (fast?.recorded) {
    landed = { recorded: true, sweepStatus: fast.sweepStatus, newStatus: fast.newStatus, careful: false };
  } else if (fast && !fast.easy && fast.sweepStatus !== "cancelled" && fast.sweepStatus !== "failed") {
    // Near a limit: record it without the in-place debit and bill it through lib/billing/usage.ts
    // (prepaid first, overage metered through the outbox, nothing past a cap), in one transaction.
    landed = await db.transaction(async (tx) => {
      const row = await call(tx, false);
      if (!row?.recorded) return { recorded: false, sweepStatus: row?.sweepStatus ?? null, newStatus: null, careful: false };
      const careful = !row.easy;
      if (careful) {
        // The debit kickdrift_record_chunk worked out from the chunk's work units (its wall time for a sweep metered by wall clock).
        const billedMs = row.billedMs;
        const usage = await recordChunkUsage(tx, { studioId: info.studioId, sweepId: chunk.sweepId, chunkIndex: chunk.chunkIndex, computeMs: billedMs, memo });
        if (usage.billed) await tx.update(sweeps).set({ computeMs: sql`${sweeps.computeMs} + ${billedMs}::int` }).where(eq(sweeps.id, chunk.sweepId));
      }
      return { recorded: true, sweepStatus: row.sweepStatus, newStatus: row.newStatus, careful };
    });
  } else {
    landed = { recorded: false, sweepStatus: fast?.sweepStatus ?? null, newStatus: null, careful: false };
  }
  if (landed.recorded) {
    if (landed.careful) {
      // Near a limit: the chunk may have crossed 80 % or 100 % of the monthly cap, queued a meter
      // event or a low-balance mail.
      onNearLimit();
      await sendCapAlerts(db, info.studioId);
      pokeOutbox();
    }
    return { recorded: true, finished: landed.newStatus === "done" };
  }
  // Landed after the sweep stopped: its result is discarded and not billed.
  if (landed.sweepStatus === "cancelled" || landed.sweepStatus === "failed") await discardChunk(db, ownerId, chunk.id);
  return { recorded: false, finished: false };
}
