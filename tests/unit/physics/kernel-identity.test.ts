/**
 * The contact kernel's speed work (neighbour list with a skin, bookkeeping skipped where it cannot
 * change the answer, the two-body path) must leave every result byte-identical: stored results,
 * cache keys and re-run chunks depend on it. These digests are of the complete run results
 * (metrics, verdict, reason, work counts and a time series) computed by the engine at commit
 * 2464b5e, before any of that work; a change that alters one of them alters stored results and
 * must version the engine instead.
 */
import { createHash } from "node:crypto";
import { describe, expect, it } from "vitest";
import { simulate } from "@/lib/physics";
import type { RunOptions, Scenario } from "@/lib/physics/types";
import { mixedBin, settledHopper, settledHopperScenario } from "../../bench/contact-scenes";

const TOLERANCES = { energyDriftRel: 0.01, maxOverlapFraction: 0.2, blowUpEnergyFactor: 1e6 };

function box(overrides: Partial<Scenario> & { count: number; speed: number; gravity: number; fraction: number }): Scenario {
  const radiusM = 0.01;
  const sideM = Math.sqrt((overrides.count * Math.PI * radiusM * radiusM) / overrides.fraction);
  return {
    scene: { kind: "box", count: overrides.count, massKg: 0.01, radiusM, widthM: sideM, heightM: sideM, maxSpeedMPerS: overrides.speed, gravityMPerS2: overrides.gravity },
    contact: overrides.contact ?? { model: "linear", stiffness: 8e4, damping: { kind: "restitution", value: 0.5 } },
    integrator: overrides.integrator ?? "symplectic-euler",
    dtS: overrides.dtS ?? 1e-4,
    substeps: overrides.substeps ?? 1,
    durationS: overrides.durationS ?? 0.03,
    tolerances: TOLERANCES,
    verdictRules: overrides.verdictRules ?? 2,
    seed: overrides.seed ?? 11,
  };
}

const CASES: { name: string; scenario: () => Scenario; options?: RunOptions; digest: string }[] = [
  { name: "crowded box under gravity, symplectic Euler", scenario: () => box({ count: 400, speed: 2, gravity: 9.81, fraction: 0.5 }), digest: "a26e98a623976acdd3cbc4f83873e20e2710a2f5b00bd82c72086861c595b009" },
  { name: "gas of marbles, velocity Verlet, undamped, rules 1", scenario: () => box({ count: 300, speed: 3, gravity: 0, fraction: 0.3, integrator: "velocity-verlet", contact: { model: "linear", stiffness: 2e4, damping: { kind: "none" } }, verdictRules: 1 }), digest: "c48bbbd7ba75cc5719ab3fafaa94c7d4648bb4f67012ce247258ee6f49084385" },
  { name: "Hertz box with a material, velocity Verlet, substeps", scenario: () => box({ count: 200, speed: 1, gravity: 9.81, fraction: 0.45, integrator: "velocity-verlet", substeps: 3, contact: { model: "hertz", material: { youngsModulusPa: 1e7, poissonRatio: 0.3 }, damping: { kind: "restitution", value: 0.6 } } }), digest: "05f7cc3fcb70b344ad8bec3db8f80729049c8123d323505253c48ccd2713057c" },
  { name: "fast box that tunnels and explodes, explicit Euler", scenario: () => box({ count: 150, speed: 80, gravity: 0, fraction: 0.4, integrator: "explicit-euler", dtS: 1e-3, contact: { model: "linear", stiffness: 1e5, damping: { kind: "coefficient", value: 0.5 } } }), digest: "8dc60af6addce574062f309db4fcc9bffda5328a15dece269a543e166b31890c" },
  { name: "fast box that tunnels, symplectic Euler, grid, rules 1", scenario: () => box({ count: 120, speed: 25, gravity: 0, fraction: 0.3, dtS: 4e-4, verdictRules: 1, contact: { model: "linear", stiffness: 2e3, damping: { kind: "none" } } }), digest: "3fec85f50ac4110456af46833c8cdf6bf1264337cf8658afede7d83c11e6dee1" },
  { name: "fast box that tunnels, symplectic Euler, grid", scenario: () => box({ count: 120, speed: 40, gravity: 0, fraction: 0.4, dtS: 5e-4, contact: { model: "linear", stiffness: 2e3, damping: { kind: "none" } } }), digest: "c9ebf55e2d8a2e81480e946deda41b6782030f41b3a22312422518fa74d843b8" },
  { name: "fast box that tunnels, symplectic Euler, all pairs", scenario: () => box({ count: 120, speed: 40, gravity: 0, fraction: 0.4, dtS: 5e-4, contact: { model: "linear", stiffness: 2e3, damping: { kind: "none" } } }), options: { broadPhase: "all-pairs" }, digest: "04752c2cbcab36724aead7c580a211fde70f31d0c3ae07dc86642781e62d0719" },
  {
    name: "row of 100 discs struck head-on (grid broad phase)",
    scenario: () => ({
      scene: { kind: "row", count: 100, massKg: 0.1, radiusM: 0.02, strikerMassKg: 0.1, strikerSpeedMPerS: 2, spacingM: 0, gapM: 0.005 },
      contact: { model: "linear", stiffness: 1e4, damping: { kind: "restitution", value: 0.9 } },
      integrator: "symplectic-euler",
      dtS: 1e-4,
      substeps: 1,
      durationS: 0.2,
      tolerances: TOLERANCES,
      verdictRules: 2,
      seed: 1,
    }),
    digest: "1800ef22c8ccb5301e0f0d1f77b189e7ebd706d4bf332ce2b2eeddb15dafdb72",
  },
  { name: "settled pile of 300 coins (snapshot), 300 steps", scenario: () => settledHopperScenario(settledHopper(300, 0.1), 300), digest: "ff0bef06bc791d4d3c93e9c59aaba039f66b991ae324d81a689cdd96251037d9" },
];

/** A tilted bin of mixed marbles (contact-scenes.ts), linear law, 0.3 s at dt = 0.2 ms unless overridden. */
function bin(across: number, tiltDeg: number, speedMPerS: number, seed: number, overrides: Partial<Scenario> = {}): Scenario {
  return {
    scene: mixedBin(across, tiltDeg, speedMPerS, seed),
    contact: { model: "linear", stiffness: 5e4, damping: { kind: "restitution", value: 0.3 } },
    integrator: "symplectic-euler",
    dtS: 2e-4,
    substeps: 1,
    durationS: 0.3,
    tolerances: TOLERANCES,
    verdictRules: 3,
    seed: 1,
    ...overrides,
  };
}

/**
 * Digests computed by the engine at commit 135ca19, before the linear pair pass, the wall band and
 * the single pass over the bodies: mixed radii and masses (so no per-contact value repeats from
 * pair to pair), walls whose normals have no zero, bodies settling onto them while the neighbour
 * list is kept, all pairs, and a run that tunnels and explodes.
 */
const LATER_CASES: typeof CASES = [
  { name: "tilted bin of 144 mixed marbles settling onto its walls (grid, neighbour list, wall band)", scenario: () => bin(12, 17, 0.5, 5), digest: "1719e65240dd8cd21d9a5449170a38410132b3ff27de254c21cf341254401aaa" },
  {
    name: "tilted bin of 49 mixed marbles, all pairs, damping coefficient, velocity Verlet",
    scenario: () => bin(7, -23, 1, 6, { integrator: "velocity-verlet", contact: { model: "linear", stiffness: 2e4, damping: { kind: "coefficient", value: 0.8 } } }),
    digest: "4701697f4e2b6ff18e50e1e452a56219af09e6ecbe1cf5ad95fd6fa93b9131bf",
  },
  {
    name: "tilted bin of 100 fast marbles, undamped, explicit Euler at a coarse step (tunnels, explodes)",
    scenario: () => bin(10, 31, 15, 7, { integrator: "explicit-euler", dtS: 1e-3, durationS: 0.5, contact: { model: "linear", stiffness: 3e4, damping: { kind: "none" } }, verdictRules: 2 }),
    digest: "26ba64876e9a57e170ddf758d4d70805d605d700cd2b7bf35fec8823299bcc31",
  },
];

function digestOf(scenario: Scenario, options: RunOptions = {}): string {
  const result = simulate(scenario, { stepping: "plain", maxSamples: 7, ...options });
  return createHash("sha256").update(JSON.stringify(result)).digest("hex");
}

describe("contact kernel: results byte-identical to the engine before the speed work", () => {
  for (const testCase of [...CASES, ...LATER_CASES]) {
    it(testCase.name, () => {
      expect(digestOf(testCase.scenario(), testCase.options)).toBe(testCase.digest);
    });
  }
});
