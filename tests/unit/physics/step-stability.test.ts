/**
 * The instability verdict at the stability boundary (verdict rules 2).
 *
 * Reference for the bound: symplectic Euler and velocity (Störmer–)Verlet applied to the harmonic
 * oscillator x'' = −ω²x have a one-step matrix of trace 2 − (ωh)² and determinant 1; its
 * eigenvalues stay on the unit circle iff (ωh)² < 4, i.e. ω·h < 2 (Hairer, Lubich & Wanner,
 * Geometric Numerical Integration, 2nd ed., Springer 2006; the linear-stability discussion of the
 * Störmer–Verlet method — section from memory). Both maps are written out in closed form below.
 */
import { describe, expect, it } from "vitest";
import { simulate, type Verdict } from "@/lib/physics";
import { STEP_STABILITY_LIMIT_OMEGA_H } from "@/lib/physics/constants";
import { expandAxes, forEachCellInRange } from "@/lib/sweeps/grid";
import { parseSweepSpec, type SweepSpec } from "@/lib/sweeps/spec";

const MASS_KG = 0.1; // equal discs: m_eff = 0.05 kg
const REDUCED_MASS_KG = MASS_KG / 2;
const COUNT = 48;

/** Invented: "Pebblewick" marbles, undamped, 48 × 48 log-spaced stiffness × step. */
function stiffnessStepSpec(integrator: "symplectic-euler" | "velocity-verlet", substeps: number, tolerances?: Record<string, number>): SweepSpec {
  const parsed = parseSweepSpec({
    name: "Pebblewick marbles: stiffness × step",
    scenario: {
      scene: { kind: "pair", massAKg: MASS_KG, massBKg: MASS_KG, radiusAM: 0.05, radiusBM: 0.05, speedAMPerS: 0.1, speedBMPerS: 0, offsetFraction: 0, gapM: 0.001 },
      contact: { model: "linear", stiffness: 1e4, damping: { kind: "none" } },
      integrator,
      dtS: 1e-3,
      substeps,
      durationS: 1,
      ...(tolerances ? { tolerances } : {}),
    },
    axes: [
      { parameter: "contact.stiffness", spacing: "log", from: 1e2, to: 1e6, count: COUNT },
      { parameter: "dtS", spacing: "log", from: 1e-4 * substeps, to: 1e-1 * substeps, count: COUNT },
    ],
  });
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
  return parsed.spec;
}

interface Row {
  stiffness: number;
  /** Per column (step ascending): ω·h from the formula, and the verdict. */
  omegaH: number[];
  verdicts: Verdict[];
  measuredOmegaH: (number | null)[];
}

function runRows(spec: SweepSpec): Row[] {
  const axes = expandAxes(spec);
  const rows = new Map<number, Row>();
  forEachCellInRange(spec, axes, 0, COUNT * COUNT, (cell) => {
    const { scenario } = cell;
    const k = scenario.contact.stiffness as number;
    const h = scenario.dtS / scenario.substeps;
    const result = simulate(scenario);
    let row = rows.get(k);
    if (!row) rows.set(k, (row = { stiffness: k, omegaH: [], verdicts: [], measuredOmegaH: [] }));
    row.omegaH.push(Math.sqrt(k / REDUCED_MASS_KG) * h);
    row.verdicts.push(result.verdict);
    row.measuredOmegaH.push(result.metrics.maxOmegaH);
  });
  const list = [...rows.values()];
  for (const row of list) {
    const order = row.omegaH.map((_, i) => i).sort((a, b) => row.omegaH[a] - row.omegaH[b]);
    row.omegaH = order.map((i) => row.omegaH[i]);
    row.verdicts = order.map((i) => row.verdicts[i]);
    row.measuredOmegaH = order.map((i) => row.measuredOmegaH[i]);
  }
  return list;
}

const INSTABILITY: readonly Verdict[] = ["step-unstable", "exploded"];
// Tolerances that switch the accuracy rules off (restitution, excursions, scene energy), so what
// remains is the instability verdict alone: the Must-show reading "first non-stable cell".
const INSTABILITY_ONLY = { energyDriftRel: 1e6, maxOverlapFraction: 100, blowUpEnergyFactor: 1e3, restitutionRel: 1e6, energyPeakRel: 1e6, minStepsPerContact: 0 };

function checkRows(rows: Row[], firstOf: (verdict: Verdict) => boolean): { worstCellsBefore: number; worstCellsAfter: number } {
  expect(rows).toHaveLength(COUNT);
  let worstCellsBefore = 0;
  let worstCellsAfter = 0;
  for (const row of rows) {
    const bound = row.omegaH.findIndex((value) => value >= STEP_STABILITY_LIMIT_OMEGA_H);
    expect(bound).toBeGreaterThan(1);
    // No cell at ω·h ≥ 2 is stable.
    for (let c = bound; c < COUNT; c++) expect(row.verdicts[c], `k = ${row.stiffness}, ω·h = ${row.omegaH[c]}`).not.toBe("stable");
    const first = row.verdicts.findIndex(firstOf);
    expect(first, `k = ${row.stiffness}`).toBeGreaterThanOrEqual(0);
    // Within one grid cell of the bound (the column just below it, or the first at or past it).
    expect(first, `k = ${row.stiffness}: first at ω·h = ${row.omegaH[first]}`).toBeGreaterThanOrEqual(bound - 1);
    expect(first).toBeLessThanOrEqual(bound);
    worstCellsBefore = Math.max(worstCellsBefore, bound - first);
    worstCellsAfter = Math.max(worstCellsAfter, first - bound);
    // The measured ω·h is the formula's (linear contact: ω = √(k/m_eff) exactly).
    for (let c = 0; c < COUNT; c++) {
      const measured = row.measuredOmegaH[c];
      if (measured !== null) expect(measured).toBeCloseTo(row.omegaH[c], 12);
    }
  }
  return { worstCellsBefore, worstCellsAfter };
}

describe("step-unstable at the stability boundary (48 × 48 stiffness × step, undamped pair, m_eff = 0.05 kg)", () => {
  for (const [integrator, substeps] of [
    ["symplectic-euler", 1],
    ["symplectic-euler", 4],
    ["velocity-verlet", 1],
  ] as const) {
    it(`${integrator}, ${substeps} substep(s): with the instability rules alone the first non-stable cell of every row is within one cell of ω·h = 2`, () => {
      const rows = runRows(stiffnessStepSpec(integrator, substeps, INSTABILITY_ONLY));
      checkRows(rows, (verdict) => verdict !== "stable");
      for (const row of rows) for (const verdict of row.verdicts) expect(["stable", ...INSTABILITY]).toContain(verdict);
    });

    it(`${integrator}, ${substeps} substep(s): with the default tolerances no cell at ω·h ≥ 2 is stable and the unstable region starts within one cell of it`, () => {
      const rows = runRows(stiffnessStepSpec(integrator, substeps));
      checkRows(rows, (verdict) => INSTABILITY.includes(verdict));
      // Below the bound the accuracy rules speak: what is not stable there says which failure it is.
      for (const row of rows) {
        const bound = row.omegaH.findIndex((value) => value >= STEP_STABILITY_LIMIT_OMEGA_H);
        for (let c = 0; c < bound - 1; c++) expect(["stable", "restitution-off", "coarse-contact"]).toContain(row.verdicts[c]);
      }
    });
  }
});
