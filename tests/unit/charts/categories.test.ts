import { describe, expect, it } from "vitest";
import {
  COMPARISON_CATEGORIES,
  compareVerdicts,
  comparisonCodes,
  countCodes,
  differenceValues,
  PENDING_CODE,
  verdictCodes,
} from "@/lib/charts/categories";
import { VERDICTS, type Verdict } from "@/lib/physics/types";

describe("verdict difference map", () => {
  it("sorts every pair of verdicts into same / only A fails / only B fails / both fail", () => {
    // Definition (product rule): a cell fails when its verdict is not "stable".
    for (const a of VERDICTS) {
      for (const b of VERDICTS) {
        const expected = a === "stable" ? (b === "stable" ? "both-pass" : "only-b-fails") : b === "stable" ? "only-a-fails" : "both-fail";
        expect(compareVerdicts(a, b)).toBe(expected);
      }
    }
  });

  it("codes cells and leaves cells pending until both sides have a verdict", () => {
    const a: (Verdict | null)[] = ["stable", "exploded", "stable", "tunneled", null, "stable"];
    const b: (Verdict | null)[] = ["stable", "stable", "energy-drift", "deep-overlap", "stable", null];
    const codes = Array.from(comparisonCodes(a, b)).map((c) => (c === PENDING_CODE ? "pending" : COMPARISON_CATEGORIES[c]));
    expect(codes).toEqual(["both-pass", "only-a-fails", "only-b-fails", "both-fail", "pending", "pending"]);
    expect(countCodes(comparisonCodes(a, b), 4)).toEqual([1, 1, 1, 1]);
  });

  it("refuses maps of different sizes", () => {
    expect(() => comparisonCodes(["stable"], ["stable", "stable"])).toThrow(/same number of cells/);
    expect(() => differenceValues([1], [1, 2])).toThrow(/A has 1, B has 2/);
  });
});

describe("metric difference map", () => {
  it("is B − A, pending where either is pending, no value where either has none", () => {
    const diff = differenceValues([1, 2, Number.NaN, null, 0.5], [1.5, 1, 3, 4, Number.NaN]);
    expect(diff[0]).toBe(0.5);
    expect(diff[1]).toBe(-1);
    expect(diff[2]).toBeNaN();
    expect(diff[3]).toBeNull();
    expect(diff[4]).toBeNaN();
  });
});

describe("verdict codes", () => {
  it("orders verdicts by severity and marks missing ones pending", () => {
    // stable, creep, coarse-contact, jitter, energy-drift, restitution-off, sinking, deep-overlap, tunneled, step-unstable, exploded.
    expect(Array.from(verdictCodes(["stable", "exploded", null, "energy-drift", "step-unstable", "coarse-contact", "creep", "jitter", "sinking"]))).toEqual([0, 10, PENDING_CODE, 4, 9, 2, 1, 3, 6]);
    expect(countCodes(verdictCodes(["stable", "stable", "tunneled", undefined, "restitution-off"]), 11)).toEqual([2, 0, 0, 0, 0, 1, 0, 0, 1, 0, 0]);
  });
});
