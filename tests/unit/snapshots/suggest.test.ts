/**
 * The first sweep suggested from a snapshot's own masses, sizes and speeds (lib/snapshots/suggest.ts):
 * the figures of small scenes worked by hand, and whole suggested sweeps run through the engine to
 * check that the map they draw has stable cells and reaches the instability on both sides.
 */
import { describe, expect, it } from "vitest";
import { linearMaxOverlapM, maxStableSubstepS } from "@/lib/physics/analytic";
import { simulate } from "@/lib/physics/simulate";
import { INSTABILITY_VERDICTS, type SnapshotBody, type SnapshotScene, type Verdict } from "@/lib/physics/types";
import { CRATESLIDE_SNAPSHOT_JSON } from "@/lib/snapshots/demo";
import { parseSnapshotFile, snapshotScene } from "@/lib/snapshots/format";
import { snapshotSweepSpec, snapshotSweepStart } from "@/lib/snapshots/store";
import { describeSnapshotSuggestion, suggestSnapshotSweep } from "@/lib/snapshots/suggest";
import { cellAt, cellCount, expandAxes } from "@/lib/sweeps/grid";
import { parseSweepSpec } from "@/lib/sweeps/spec";

const disc = (xM: number, yM: number, extra: Partial<SnapshotBody> = {}): SnapshotBody => ({ xM, yM, vxMPerS: 0, vyMPerS: 0, massKg: 1, radiusM: 0.1, ...extra });
const scene = (bodies: SnapshotBody[], extra: Partial<SnapshotScene> = {}): SnapshotScene => ({ kind: "snapshot", bodies, walls: [], gravityMPerS2: 0, speedScale: 1, ...extra });
const FLOOR = { normalX: 0, normalY: 1, offsetM: 0 };

function loadingBay(): SnapshotScene {
  const parsed = parseSnapshotFile(new TextEncoder().encode(CRATESLIDE_SNAPSHOT_JSON));
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.problems));
  return snapshotScene(parsed.snapshot);
}

/** 40 discs of 0.5 kg on an 8 × 5 grid in a 2 m box under gravity, each with its own speed (about 1 m/s). */
function gravityBox(): SnapshotScene {
  const bodies = Array.from({ length: 40 }, (_, k) =>
    disc(0.2 + (k % 8) * 0.22, 0.3 + Math.floor(k / 8) * 0.3, { vxMPerS: Math.round(Math.sin(k * 1.7) * 100) / 100, vyMPerS: Math.round(Math.cos(k * 2.3) * 100) / 100, massKg: 0.5, radiusM: 0.08 }),
  );
  const walls = [FLOOR, { normalX: 1, normalY: 0, offsetM: 0 }, { normalX: -1, normalY: 0, offsetM: -2 }, { normalX: 0, normalY: -1, offsetM: -2 }];
  return scene(bodies, { walls, gravityMPerS2: 9.81 });
}

describe("the stiffness and step a snapshot suggests, worked by hand", () => {
  it("two discs closing head-on: the stiffness that keeps the impact within 5 % of the radius, and the step bound it allows", () => {
    // 2 kg discs, r = 0.1 m, 0.8 m apart surface to surface, A at 3 m/s: they meet at 0.27 s, within the 1 s run.
    const s = suggestSnapshotSweep(scene([disc(0, 0, { massKg: 2, vxMPerS: 3 }), disc(1, 0, { massKg: 2 })]));
    expect(s.basis).toBe("derived");
    expect(s.contactCount).toBe(1);
    expect(s.impact).toMatchObject({ body: 0, other: 1, wall: null, effectiveMassKg: 1, closingSpeedMPerS: 3, radiusM: 0.1 });
    // k = m*·v² / (0.05·r)² = 1 · 9 / 0.005² = 360,000 N/m (half the default 10 % tolerance: 5 %).
    expect(s.targetOverlapFraction).toBe(0.05);
    expect(s.impact!.stiffnessNPerM).toBeCloseTo(360_000, 6);
    expect(s.stiffnessNPerM).toBe(360_000);
    // At that k the undamped impact sinks exactly 5 % of the radius: δ_max = v/ω0 (Luding 2008, Eur. J. Environ. Civ. Eng. 12, δ_max).
    expect(linearMaxOverlapM(s.stiffnessNPerM, 1, 3) / 0.1).toBeCloseTo(0.05, 12);
    // ω·h < 2 with ω = √(k/m*) = 600 rad/s: h < 1/300 s (Hairer, Lubich & Wanner 2006, the harmonic oscillator).
    expect(s.maxStableStepS).toBeCloseTo(1 / 300, 15);
    expect(s.maxStableStepS).toBeCloseTo(maxStableSubstepS(360_000, 1), 15);
    // At 60 Hz the pairing holds k ≤ m*·(2/h)² = 1 · 120² = 14,400 N/m: below the estimate, so the reasoning asks for substeps.
    expect(s.stiffnessCapAtGameStepNPerM).toBeCloseTo(14_400, 6);
    // Stiffness from a thirtieth to three times the estimate, two figures; steps 1/60 s down to ≤ (1/300)/4 by halvings: 1/1920 s.
    expect(s.stiffnessAxis).toEqual({ from: 12_000, to: 1_100_000, count: 5 });
    expect(s.frameSteps).toEqual([1 / 1920, 1 / 960, 1 / 480, 1 / 240, 1 / 120, 1 / 60]);
    const text = describeSnapshotSuggestion(s).join("\n");
    expect(text).toContain("Hardest impact: disc 1 and disc 2, closing at up to 3 m/s with effective mass 1 kg");
    expect(text).toContain("needs k ≥ 360 kN/m");
    expect(text).toContain("the step must stay below 3.33 ms");
    expect(text).toContain("holds springs only up to 14.4 kN/m, below the estimate: expect to need substeps");
  });

  it("a disc falling onto the floor: the speed it lands with comes from the drop (v² = 2·g·h)", () => {
    // 1 kg, r = 0.1 m, its surface 1 m above the floor, at rest, g = 9.81: it lands within the run (½·g·T² = 4.9 m).
    const s = suggestSnapshotSweep(scene([disc(0, 1.1)], { walls: [FLOOR], gravityMPerS2: 9.81 }));
    expect(s.impact).toMatchObject({ body: 0, other: null, wall: 0, effectiveMassKg: 1 });
    expect(s.impact!.closingSpeedMPerS).toBeCloseTo(Math.sqrt(2 * 9.81 * 1), 12);
    // k = 1 · 19.62 / 0.005² = 784,800 N/m.
    expect(s.impact!.stiffnessNPerM).toBeCloseTo(784_800, 4);
    expect(s.stiffnessNPerM).toBe(780_000);
  });

  it("a resting stack: the bottom disc carries the discs above it, and load/k stays within 5 % of its radius", () => {
    // Two 1 kg discs stacked on the floor, touching: the bottom one carries 2·9.81 N; k ≥ 19.62 / (0.05·0.1) = 3,924 N/m (Hooke).
    const s = suggestSnapshotSweep(scene([disc(0, 0.1), disc(0, 0.3)], { walls: [FLOOR], gravityMPerS2: 9.81 }));
    expect(s.resting).toMatchObject({ body: 0, radiusM: 0.1 });
    expect(s.resting!.loadN).toBeCloseTo(19.62, 12);
    expect(s.resting!.stiffnessNPerM).toBeCloseTo(3924, 8);
    expect(s.stiffnessNPerM).toBe(3900);
    // The touching pair is the lightest pairing (m* = 0.5 kg), lighter than a disc on the floor (1 kg).
    expect(s.lightest).toMatchObject({ body: 0, other: 1, effectiveMassKg: 0.5 });
    // The game's step holds this soft spring: 0.5 · 120² = 7,200 N/m ≥ 3,900 N/m; the axis then reaches past the bound
    // at the stiffest column (2·√(0.5/11,700) = 13 ms < 1/60 s), so no coarser steps are needed.
    expect(describeSnapshotSuggestion(s).join("\n")).toContain("above the estimate: one step per frame should do");
    expect(s.frameSteps[s.frameSteps.length - 1]).toBe(1 / 60);
  });

  it("discs that never meet in the run leave nothing to place the map by: the general grid, said so", () => {
    const apart = suggestSnapshotSweep(scene([disc(0, 0, { vxMPerS: -1 }), disc(1, 0, { vxMPerS: 1 })]));
    expect(apart.basis).toBe("nothing-meets");
    expect(apart.stiffnessAxis).toEqual({ from: 1e4, to: 1e6, count: 5 });
    expect(apart.frameSteps).toEqual([1 / 960, 1 / 480, 1 / 240, 1 / 120, 1 / 60]);
    expect(describeSnapshotSuggestion(apart)[0]).toMatch(/^No two discs, and no disc and wall, meet in the first 1 s/);
    // Parallel motion never closes a gap either (the loading bay's coins move together).
    expect(suggestSnapshotSweep(scene([disc(0, 0, { vxMPerS: 1 }), disc(0.5, 0, { vxMPerS: 1 })])).basis).toBe("nothing-meets");
  });

  it("is the same for the same scene, whatever order the discs are listed in (up to their numbers)", () => {
    const bay = loadingBay();
    const first = suggestSnapshotSweep(bay);
    expect(suggestSnapshotSweep(structuredClone(bay))).toEqual(first);
    const reversed = suggestSnapshotSweep({ ...bay, bodies: [...bay.bodies].reverse() });
    expect([reversed.stiffnessNPerM, reversed.stiffnessAxis, reversed.frameSteps, reversed.contactCount]).toEqual([first.stiffnessNPerM, first.stiffnessAxis, first.frameSteps, first.contactCount]);
  });
});

/** Every cell of the suggested sweep, run by the engine: its verdicts by stiffness column and step row. */
function runSuggested(sceneToRun: SnapshotScene) {
  const parsed = parseSweepSpec(snapshotSweepSpec({ name: "test", version: 1, scene: sceneToRun }));
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
  const axes = expandAxes(parsed.spec);
  const verdicts: { stiffness: number; dtS: number; verdict: Verdict }[] = [];
  for (let index = 0; index < cellCount(axes); index++) {
    const cell = cellAt(parsed.spec, axes, index);
    verdicts.push({ stiffness: cell.axisValues[0] as number, dtS: cell.axisValues[1] as number, verdict: simulate(cell.scenario).verdict });
  }
  return { axes, verdicts };
}

describe("the suggested sweep, run", () => {
  for (const [name, build] of [
    ["the loading bay (no gravity, a forklift-shoved crate into a block)", loadingBay],
    ["40 discs in a box under gravity", gravityBox],
  ] as const) {
    it(`${name}: stable cells, deep overlaps at the soft fine corner, the step bound at the stiff coarse corner`, () => {
      const { axes, verdicts } = runSuggested(build());
      const stiffnesses = axes[0].values as number[];
      const steps = axes[1].values as number[];
      // Stable cells exist: the map has somewhere to stand.
      expect(verdicts.filter((cell) => cell.verdict === "stable").length).toBeGreaterThanOrEqual(3);
      // The softest spring at the finest step sinks past the tolerance: the soft side is bracketed.
      expect(verdicts.find((cell) => cell.stiffness === stiffnesses[0] && cell.dtS === steps[0])?.verdict).toBe("deep-overlap");
      // The stiffest spring at the game's step fails the integrator: the step bound is bracketed.
      const corner = verdicts.find((cell) => cell.stiffness === stiffnesses[stiffnesses.length - 1] && cell.dtS === steps[steps.length - 1])?.verdict;
      expect(INSTABILITY_VERDICTS).toContain(corner);
      expect(corner).not.toBe("deep-overlap");
      // Each stiffness column that has a stable cell has it at its finer steps: stable cells sit below the bound, never above an unstable one.
      for (const k of stiffnesses) {
        const column = steps.map((dtS) => verdicts.find((cell) => cell.stiffness === k && cell.dtS === dtS)!.verdict);
        const lastStable = column.lastIndexOf("stable");
        const firstStepFailure = column.findIndex((verdict) => verdict === "step-unstable" || verdict === "exploded");
        if (lastStable >= 0 && firstStepFailure >= 0) expect(firstStepFailure).toBeGreaterThan(lastStable);
      }
    }, 120_000);
  }

  it("answers the API's starting spec and its reasoning together", () => {
    const start = snapshotSweepStart({ name: "Crateslide loading bay", version: 1, scene: loadingBay() });
    expect(start.sweepSpec.axes).toEqual([
      { parameter: "contact.stiffness", spacing: "log", ...start.sweepSuggestion.stiffnessAxis },
      { parameter: "dtS", values: start.sweepSuggestion.frameSteps },
    ]);
    expect(start.sweepSpec.scenario.contact).toMatchObject({ model: "linear", stiffness: start.sweepSuggestion.stiffnessNPerM });
    expect(start.sweepSuggestion.reasoning).toEqual(describeSnapshotSuggestion(start.sweepSuggestion));
    // The forklift-shoved crate (disc 35, 4 m/s) into the block of crates is the hardest impact.
    expect(start.sweepSuggestion.reasoning.join("\n")).toMatch(/Hardest impact: disc \d+ and disc 35, closing at up to 4\.01 m\/s/);
  });
});
