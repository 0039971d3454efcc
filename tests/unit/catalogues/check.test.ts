/**
 * Catalogue checks: the recommended single stiffness against the bound worked out by hand, and the
 * simulation of every pair at that stiffness; the pair matrix; the exports' CSV escaping.
 */
import { describe, expect, it } from "vitest";
import { CheckInputError, cataloguePairs, checkSettingsSchema, checkSpec, pairMatrix, recommend, type CheckSettings } from "@/lib/catalogues/check";
import { CRATESLIDE_CATALOGUE_CSV, CRATESLIDE_SETTINGS } from "@/lib/catalogues/demo";
import { checkExportJson, pairMatrixCsv, recommendationCsv } from "@/lib/catalogues/exports";
import { parseCatalogueFile, type CatalogueObject } from "@/lib/catalogues/format";
import { runChunkTask, unpackResults } from "@/lib/sweeps/chunk-task";
import { axisValuesAt, cellCount, expandAxes } from "@/lib/sweeps/grid";
import type { CellResult } from "@/lib/sweeps/results";
import { parseSweepSpec } from "@/lib/sweeps/spec";

const objects = parseCatalogueFile(new TextEncoder().encode(CRATESLIDE_CATALOGUE_CSV), "crateslide.csv").objects as CatalogueObject[];

/** Every cell of a check, run in this thread through the worker's own loop. */
function runCheck(settings: CheckSettings, catalogue = objects): CellResult[] {
  const parsed = parseSweepSpec(checkSpec("Crateslide objects", 1, catalogue, settings));
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
  const axes = expandAxes(parsed.spec);
  const outcome = runChunkTask({ kind: "range", chunkIndex: 0, spec: parsed.spec, firstCell: 0, cellCount: cellCount(axes) });
  return unpackResults(outcome, (index) => axisValuesAt(axes, index));
}

describe("the check's sweep", () => {
  it("covers every unordered pair (each object with itself too) × speeds × offsets, each pair at its own bodies", () => {
    const settings = checkSettingsSchema.parse(CRATESLIDE_SETTINGS);
    const parsed = parseSweepSpec(checkSpec("Crateslide objects", 1, objects, settings));
    expect(parsed.ok).toBe(true);
    if (!parsed.ok) return;
    const axes = expandAxes(parsed.spec);
    // 5 objects: 5·6/2 = 15 pairs; 6 speed steps; 2 offsets.
    expect(axes.map((axis) => axis.values.length)).toEqual([15, 6, 2]);
    expect(axes[0].values[1]).toBe("crate × coin");
  });
});

describe("per-group stiffness", () => {
  it("gives a pair the harmonic mean of its two groups, and a group meeting itself its own stiffness", () => {
    const settings = checkSettingsSchema.parse({ ...CRATESLIDE_SETTINGS, stiffness: undefined, groupStiffness: { cargo: 40_000, loot: 10_000, player: 20_000 } });
    const pairs = cataloguePairs(objects, settings);
    const stiffnessOf = (name: string) => pairs.find((pair) => pair.name === name)?.stiffness;
    // Harmonic mean 2·kA·kB/(kA + kB): cargo × loot = 2·40,000·10,000 / 50,000 = 16,000 N/m (worked by hand).
    expect(stiffnessOf("crate × coin")).toBe(16_000);
    expect(stiffnessOf("crate × barrel")).toBe(40_000);
    // The sweep carries each pair's own stiffness on the pair axis.
    const spec = checkSpec("Crateslide objects", 1, objects, settings);
    expect(spec.axes?.[0].pairs?.[1]).toMatchObject({ name: "crate × coin", stiffness: 16_000, restitution: 0.4 });
    expect(parseSweepSpec(spec).ok).toBe(true);
  });

  it("names the group that has no stiffness", () => {
    const settings = checkSettingsSchema.parse({ ...CRATESLIDE_SETTINGS, stiffness: undefined, groupStiffness: { cargo: 40_000, loot: 10_000 } });
    expect(() => cataloguePairs(objects, settings)).toThrow(CheckInputError);
    expect(() => cataloguePairs(objects, settings)).toThrow('no stiffness for group "player" (object "slider puck"): add it to groupStiffness or give stiffness');
  });
});

describe("the recommended single stiffness", () => {
  const settings = checkSettingsSchema.parse(CRATESLIDE_SETTINGS);
  const recommendation = recommend(objects, settings);

  it("is the bound ω·h < 2 with the margin, at the lightest reduced mass, worked out by hand", () => {
    // Bound: symplectic Euler / velocity Verlet on the harmonic oscillator are stable for ω·h < 2
    // (Hairer, Lubich & Wanner 2006, Geometric Numerical Integration, the harmonic oscillator).
    // By hand: lightest pair coin × coin, m* = 0.6·0.6/(0.6 + 0.6) = 0.3 kg; h = (1/60)/16 = 1/960 s;
    // with margin 0.8 the phase allowed is ω·h ≤ 2·(1 − 0.8) = 0.4, so ω = 0.4·960 = 384 rad/s and
    // k = m*·ω² = 0.3 · 384² = 44,236.8 N/m.
    expect(recommendation.lightestPair).toBe("coin × coin");
    expect(recommendation.lightestReducedMassKg).toBeCloseTo(0.3, 12);
    expect(recommendation.stiffness).not.toBeNull();
    expect(recommendation.stiffness as number).toBeCloseTo(44_236.8, 6);
  });

  it("keeps every pair inside the step bound and shallow in the simulation; bounces off the target say so", () => {
    const confirmed = checkSettingsSchema.parse({ ...CRATESLIDE_SETTINGS, stiffness: recommendation.stiffness });
    const results = runCheck(confirmed);
    const matrix = pairMatrix(objects, confirmed, results);
    expect(matrix.complete).toBe(true);
    for (const pair of matrix.pairs) {
      // Verdict rules 2: nothing unstable, tunnelled or sunk; the only failure left is the rebound.
      expect(["stable", "restitution-off"], pair.name).toContain(pair.worstVerdict);
      expect(pair.boundMargin).toBeGreaterThanOrEqual(0.8 - 1e-12);
    }
    // A restitution-off cell is one whose rebound is off the target by more than the check's 10 %
    // (symplectic Euler's dashpot at ω·h ≤ 0.4: measured 0.87–1.10 × the target).
    for (const cell of results.filter((result) => result.verdict === "restitution-off")) expect(Math.abs((cell.metrics.amplification as number) - 1)).toBeGreaterThan(0.1);
    // The undamped pairs (restitution 1 in the catalogue) and the heavy ones are fully stable up to their closing speed.
    expect(matrix.pairs.some((pair) => pair.worstVerdict === "stable" && Math.abs((pair.highestStableSpeedMPerS as number) - pair.closingSpeedMPerS) < 1e-12)).toBe(true);
  });

  it("at the game's own stiffness (1.5e6 N/m) names the pairs at risk, coin × coin past the bound", () => {
    const matrix = pairMatrix(objects, settings, runCheck(settings));
    expect(matrix.atRisk.length).toBeGreaterThan(0);
    expect(matrix.atRisk).toContain("coin × coin");
    const coins = matrix.pairs.find((pair) => pair.name === "coin × coin");
    // ω·h = √(1.5e6/0.3)/960 ≈ 2.33 > 2: past the bound, so the margin 1 − ω·h/2 is negative.
    expect(coins?.boundMargin).toBeCloseTo(1 - Math.sqrt(1.5e6 / 0.3) / 960 / 2, 12);
    expect(coins?.highestStableSpeedMPerS).toBe(0);
    expect(matrix.riskiest).not.toBeNull();
  });

  it("has no single stiffness when a pair tunnels at the game's substeps, and says why", () => {
    const fast: CatalogueObject[] = [{ name: "pellet", massKg: 0.01, radiusM: 0.01, topSpeedMPerS: 40, restitution: 0.5, group: null }, ...objects];
    const none = recommend(fast, checkSettingsSchema.parse({ ...CRATESLIDE_SETTINGS, substeps: 1 }));
    expect(none.stiffness).toBeNull();
    expect(none.stiffnessNote).toMatch(/^No stiffness can help pellet × pellet/);
  });
});

describe("exports", () => {
  it("escape formula-like object names in CSV and keep them as text in JSON", () => {
    const sneaky: CatalogueObject[] = [
      { name: "=cmd|' /C calc'!A0", massKg: 1, radiusM: 0.3, topSpeedMPerS: 2, restitution: 0.5, group: null },
      { name: "crate, large", massKg: 3, radiusM: 0.4, topSpeedMPerS: 2, restitution: 0.4, group: null },
    ];
    const settings = checkSettingsSchema.parse({ dtS: 1 / 60, substeps: 16, integrator: "symplectic-euler", stiffness: 20_000, speedSteps: 2, offsets: [0] });
    const matrix = pairMatrix(sneaky, settings, runCheck(settings, sneaky));
    const csv = pairMatrixCsv(matrix);
    const lines = csv.split("\r\n");
    // The guard of lib/sweeps/results.ts: a leading apostrophe, then RFC 4180 quoting.
    expect(lines[1].startsWith(`'=cmd|' /C calc'!A0 × =cmd|' /C calc'!A0,'=cmd|' /C calc'!A0,'=cmd|' /C calc'!A0,`)).toBe(true);
    expect(lines[3].startsWith(`"crate, large × crate, large","crate, large","crate, large",`)).toBe(true);
    expect(csv.split("\r\n").every((line) => !line.startsWith("="))).toBe(true);
    const json = JSON.parse(checkExportJson({ checkId: "chk_x", catalogue: { name: "n", version: 1, contentHash: "h" }, settings, matrix, recommendation: recommend(sneaky, settings) }));
    expect(json.pairs[0].objectA).toBe("=cmd|' /C calc'!A0");
    const rec = recommendationCsv(settings, recommend(sneaky, settings));
    expect(rec.split("\r\n")[0]).toBe("setting,value,unit,note");
    expect(rec).toContain("recommended_stiffness,");
  });
});
