/**
 * The two-body loop (`integratePair` in lib/physics/pair-loop.ts) against the general step loop:
 * pair cells take the two-body loop unless a broad phase is forced, and `broadPhase: "grid"` sends
 * the same cell through the general path (ContactField.evaluate + the neighbour list), which the
 * kernel-identity digests pin. Every result must be byte-identical (the stored results and cache
 * keys depend on it), in plain and fast stepping, across damping laws, tunnels, explosions and
 * both verdict rule sets.
 */
import { describe, expect, it } from "vitest";
import { simulate } from "@/lib/physics/simulate";
import { DEFAULT_TOLERANCES } from "@/lib/physics/constants";
import type { Damping, PairScene, RunResult, Scenario } from "@/lib/physics/types";

const DAMPINGS: Damping[] = [
  { kind: "none" },
  { kind: "coefficient", value: 0.3 },
  { kind: "restitution", value: 0.5 },
  { kind: "restitution", value: 1 },
];

/** A deterministic spread of pair cells (linear congruential generator, fixed seed). */
function scenarios(count: number): Scenario[] {
  let state = 12345;
  const next = (): number => {
    state = (state * 1103515245 + 12345) % 2147483648;
    return state / 2147483648;
  };
  const list: Scenario[] = [];
  for (let i = 0; i < count; i++) {
    list.push({
      scene: {
        kind: "pair",
        massAKg: 0.1 + next() * 3,
        massBKg: 0.1 + next() * 3,
        radiusAM: 0.01 + next(),
        radiusBM: 0.01 + next(),
        speedAMPerS: next() * 20,
        speedBMPerS: next() < 0.3 ? 0 : next() * 20,
        offsetFraction: next() < 0.3 ? 0 : next() * 0.99,
        gapM: next() < 0.2 ? 0 : next() * 0.5,
      },
      contact: { model: "linear", stiffness: 10 ** (1 + 6 * next()), damping: DAMPINGS[i % DAMPINGS.length] },
      integrator: "symplectic-euler",
      dtS: 10 ** (-5 + 3 * next()),
      substeps: next() < 0.3 ? 3 : 1,
      durationS: 0.05 + next() * 0.5,
      tolerances: DEFAULT_TOLERANCES,
      verdictRules: next() < 0.5 ? 2 : 1,
      seed: 1,
    });
  }
  return list;
}

/** The result without what names the broad phase (the work record's grid flag and the work units it prices). */
function physicsOf(result: RunResult): string {
  const { grid: _grid, ...work } = result.work;
  return JSON.stringify({ metrics: result.metrics, verdict: result.verdict, reason: result.reason, work });
}

describe("two-body loop for pair cells", () => {
  it("gives byte-identical results to the general path in plain and fast stepping", () => {
    const verdicts = new Set<string>();
    let compared = 0;
    for (const scenario of scenarios(120)) {
      for (const stepping of ["plain", "fast"] as const) {
        const twoBody = simulate(scenario, { stepping });
        const general = simulate(scenario, { stepping, broadPhase: "grid" });
        expect(physicsOf(twoBody), `${JSON.stringify(scenario)} ${stepping}`).toBe(physicsOf(general));
        expect(twoBody.work.grid).toBe(false);
        verdicts.add(general.verdict);
        compared++;
      }
    }
    expect(compared).toBe(240);
    // The spread must reach the rare branches (tunnels, overlaps, first-contact ends), not only quiet runs.
    for (const verdict of ["stable", "tunneled", "deep-overlap", "step-unstable"]) expect(verdicts.has(verdict), verdict).toBe(true);
  });

  it("stays byte-identical over long runs: many chunks, coasting free flight, contacts at a chunk boundary, pairs at rest or receding", () => {
    // The two-body loop runs in chunks of steps and coasts free flight (lib/physics/pair-loop.ts,
    // PAIR_CHUNK_STEPS = 2048): these cells cross many chunks, start a contact on the steps around
    // the first chunk boundary (closing at 1 m/s, dt = 10⁻⁴ s: gap 0.2048 m closes on step 2048), and
    // coast with zero and with receding velocities.
    const scene: PairScene = { kind: "pair", massAKg: 0.05, massBKg: 0.05, radiusAM: 0.02, radiusBM: 0.02, speedAMPerS: 1, speedBMPerS: 0, offsetFraction: 0, gapM: 0.01 };
    const base: Scenario = {
      scene,
      contact: { model: "linear", stiffness: 1e3, damping: { kind: "restitution", value: 0.8 } },
      integrator: "symplectic-euler",
      dtS: 1e-4,
      substeps: 1,
      durationS: 4,
      tolerances: DEFAULT_TOLERANCES,
      verdictRules: 2,
      seed: 1,
    };
    const cells: Scenario[] = [];
    for (const stiffness of [10, 1e3, 1e5]) cells.push({ ...base, contact: { ...base.contact, stiffness } });
    for (let step = -8; step <= 8; step++) cells.push({ ...base, durationS: 0.3, scene: { ...scene, gapM: 0.2048 + step * 1e-5 } });
    cells.push({ ...base, durationS: 1, scene: { ...scene, speedAMPerS: 0 } });
    cells.push({ ...base, durationS: 1, scene: { ...scene, speedAMPerS: -0.5, speedBMPerS: 0.25 } });
    let withContact = 0;
    for (const scenario of cells) {
      const twoBody = simulate(scenario, { stepping: "plain" });
      const general = simulate(scenario, { stepping: "plain", broadPhase: "grid" });
      expect(physicsOf(twoBody), JSON.stringify(scenario)).toBe(physicsOf(general));
      if (general.metrics.contactSteps > 0) withContact++;
    }
    // The boundary cells and the long ones touch; the resting and receding pairs never do.
    expect(withContact).toBe(cells.length - 2);
  });

  it("keeps a contact spec with parameters it does not model on the general path", () => {
    const [scenario] = scenarios(1);
    // An extra key (as a tangential law would add) must not change the normal-only result either.
    const extended = { ...scenario, contact: { ...scenario.contact, tangentialProbe: 0 } } as Scenario;
    expect(JSON.stringify(simulate(extended, { stepping: "plain" }))).toBe(JSON.stringify(simulate(scenario, { stepping: "plain" })));
  });
});
