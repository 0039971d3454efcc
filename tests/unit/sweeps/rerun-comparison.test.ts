/** The before/after table of a re-run at a finer dt: which way each quantity moved. */
import { describe, expect, it } from "vitest";
import { comparisonRows, type ComparedRun } from "@/components/sweeps/rerun-comparison";
import type { Metrics } from "@/lib/physics/types";

const metrics = (over: Partial<Metrics>): Metrics => ({
  momentumDriftRelX: 0,
  momentumDriftRelY: 0,
  energyErrorRel: 0,
  maxEnergyErrorRel: 0,
  effectiveRestitution: null,
  maxOverlapFraction: 0,
  contactDurationS: null,
  contactSteps: 0,
  tunneled: false,
  exploded: false,
  maxOmegaH: null,
  amplification: null,
  steps: 100,
  ...over,
});

describe("re-run comparison", () => {
  it("reads a coarser step that exploded against a finer one that is stable as better on every count", () => {
    const before: ComparedRun = { dtS: 1 / 60, substeps: 1, verdict: "exploded", metrics: metrics({ maxEnergyErrorRel: 1200, energyErrorRel: 900, maxOverlapFraction: 0.9, maxOmegaH: 3.1, amplification: 40 }) };
    const after: ComparedRun = { dtS: 1 / 240, substeps: 1, verdict: "stable", metrics: metrics({ maxEnergyErrorRel: 0.004, energyErrorRel: -0.002, maxOverlapFraction: 0.05, maxOmegaH: 0.78, amplification: 1.01 }) };
    const rows = Object.fromEntries(comparisonRows(before, after).map((row) => [row.key, row]));
    expect(rows.verdict).toMatchObject({ before: "Exploded", after: "Stable", change: "better" });
    for (const key of ["maxEnergy", "finalEnergy", "overlap", "omegaH", "rebound"]) expect(rows[key].change, key).toBe("better");
    expect(rows.dt.change).toBe("");
  });

  it("says worse when the finer step made a quantity larger, and leaves no direction where a side has no value", () => {
    const before: ComparedRun = { dtS: 0.01, substeps: 2, verdict: "stable", metrics: metrics({ maxOverlapFraction: 0.01, amplification: null }) };
    const after: ComparedRun = { dtS: 0.005, substeps: 2, verdict: "coarse-contact", metrics: metrics({ maxOverlapFraction: 0.02, amplification: 1.2 }) };
    const rows = Object.fromEntries(comparisonRows(before, after).map((row) => [row.key, row]));
    expect(rows.verdict.change).toBe("worse");
    expect(rows.overlap.change).toBe("worse");
    expect(rows.rebound).toMatchObject({ before: "no value", change: "" });
    expect(rows.maxEnergy.change).toBe("same");
  });
});
