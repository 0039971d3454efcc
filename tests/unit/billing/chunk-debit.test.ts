/**
 * The debit rule (lib/quotas/standing.ts chunkDebit): a chunk is billed only up to what is left of
 * the monthly cap; of that, prepaid minutes first while the balance is positive, then overage as
 * far as the month's overage headroom goes; the rest is not billed. Figures are the rule's own
 * arithmetic, worked beside each case.
 */
import { describe, expect, it } from "vitest";
import { PLAN_DEFAULTS } from "@/lib/quotas/plan";
import { chunkDebit, type Standing } from "@/lib/quotas/standing";

function standing(over: { balanceMs?: number; monthUsedMs?: number; monthOverageMs?: number; capMs?: number; overageAllowed?: boolean; overageCapMs?: number }): Standing {
  return {
    studioStatus: "active",
    quotas: {
      ...PLAN_DEFAULTS,
      monthlyComputeMs: over.capMs ?? 1_000_000,
      overageAllowed: over.overageAllowed ?? false,
      overageCapMs: over.overageCapMs ?? 0,
    },
    balanceMs: over.balanceMs ?? 0,
    monthKey: "any",
    monthUsedMs: over.monthUsedMs ?? 0,
    monthOverageMs: over.monthOverageMs ?? 0,
    reservedMs: 0,
    runningSweeps: 0,
  };
}

describe("chunkDebit", () => {
  it("takes the whole chunk from the balance when it covers it", () => {
    expect(chunkDebit(standing({ balanceMs: 10_000 }), 600)).toEqual({ prepaidMs: 600, overageMs: 0, unbilledMs: 0 });
  });

  it("without overage, bills past the balance nowhere", () => {
    // 400 ms left of the balance for a 700 ms chunk: 400 prepaid, 300 not billed.
    expect(chunkDebit(standing({ balanceMs: 400 }), 700)).toEqual({ prepaidMs: 400, overageMs: 0, unbilledMs: 300 });
  });

  it("never spends a negative balance (minutes owed after a refund), and meters the chunk as overage if allowed", () => {
    expect(chunkDebit(standing({ balanceMs: -5_000 }), 700)).toEqual({ prepaidMs: 0, overageMs: 0, unbilledMs: 700 });
    expect(chunkDebit(standing({ balanceMs: -5_000, overageAllowed: true, overageCapMs: 10_000 }), 700)).toEqual({ prepaidMs: 0, overageMs: 700, unbilledMs: 0 });
  });

  it("meters the part past the balance as overage up to the month's overage headroom", () => {
    // Balance 1,000; overage cap 2,500 with 1,800 already metered leaves 700 of headroom:
    // a 2,000 ms chunk is 1,000 prepaid + 700 overage + 300 not billed.
    expect(chunkDebit(standing({ balanceMs: 1_000, overageAllowed: true, overageCapMs: 2_500, monthOverageMs: 1_800 }), 2_000)).toEqual({ prepaidMs: 1_000, overageMs: 700, unbilledMs: 300 });
    // Headroom used up: nothing more is metered.
    expect(chunkDebit(standing({ balanceMs: 0, overageAllowed: true, overageCapMs: 2_500, monthOverageMs: 2_500 }), 500)).toEqual({ prepaidMs: 0, overageMs: 0, unbilledMs: 500 });
  });

  it("bills nothing past the monthly compute cap, prepaid or overage", () => {
    // Cap 10,000 with 9,600 used: 400 ms billable of a 1,000 ms chunk, however large the balance.
    expect(chunkDebit(standing({ balanceMs: 1_000_000, capMs: 10_000, monthUsedMs: 9_600 }), 1_000)).toEqual({ prepaidMs: 400, overageMs: 0, unbilledMs: 600 });
    // Usage already past a lowered cap: nothing billable.
    expect(chunkDebit(standing({ balanceMs: 1_000_000, capMs: 10_000, monthUsedMs: 12_000, overageAllowed: true, overageCapMs: 5_000 }), 1_000)).toEqual({ prepaidMs: 0, overageMs: 0, unbilledMs: 1_000 });
    // The cap applies before the split: 300 billable, balance 100 → 100 prepaid + 200 overage.
    expect(chunkDebit(standing({ balanceMs: 100, capMs: 10_000, monthUsedMs: 9_700, overageAllowed: true, overageCapMs: 5_000 }), 1_000)).toEqual({ prepaidMs: 100, overageMs: 200, unbilledMs: 700 });
  });

  it("a zero-length chunk is billed nothing", () => {
    expect(chunkDebit(standing({ balanceMs: 1_000 }), 0)).toEqual({ prepaidMs: 0, overageMs: 0, unbilledMs: 0 });
  });
});
