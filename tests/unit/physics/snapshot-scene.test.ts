/** The snapshot scene: discs and walls as a game exported them, run by the same engine as the built-in scenes. */
import { describe, expect, it } from "vitest";
import { reducedMassKg, simulate, snapshotOverlaps, type Scene, type SnapshotBody, type SnapshotScene } from "@/lib/physics";
import { buildScene } from "@/lib/physics/scenes";
import { headOnPair, linearContact, scenario } from "./fixtures";

const stiffness = 2e6; // stiff enough that the overlap stays below 1 % of the radius
const radiusM = 0.05;

function disc(xM: number, yM: number, vxMPerS: number, vyMPerS: number, massKg: number, r = radiusM): SnapshotBody {
  return { xM, yM, vxMPerS, vyMPerS, massKg, radiusM: r };
}

function snapshot(bodies: SnapshotBody[], walls: SnapshotScene["walls"] = [], extra: Partial<SnapshotScene> = {}): SnapshotScene {
  return { kind: "snapshot", bodies, walls, gravityMPerS2: 0, speedScale: 1, ...extra };
}

function endVelocities(scene: Scene, dtS: number, durationS: number, integrator: "velocity-verlet" | "symplectic-euler" = "velocity-verlet") {
  const result = simulate(scenario(scene, linearContact(stiffness), integrator, dtS, durationS), { maxSamples: 2 });
  const series = result.series!;
  const end = series.tS.length - 1;
  const masses = scene.kind === "snapshot" ? scene.bodies.map((body) => body.massKg) : [];
  return { result, velocity: (i: number) => [series.bodies[i].pxNs[end] / masses[i], series.bodies[i].pyNs[end] / masses[i]] };
}

describe("snapshot scene", () => {
  it("two discs head-on: momentum and, without damping, energy conserved; final velocities as the 1D elastic formula", () => {
    const [ma, mb, va, vb] = [0.3, 0.7, 2.0, -0.5]; // an invented crate meeting a heavier barrel
    const scene = snapshot([disc(-0.101, 0, va, 0, ma), disc(0, 0, vb, 0, mb)]);
    const contactTime = Math.PI / Math.sqrt(stiffness / reducedMassKg(ma, mb));
    const { result, velocity } = endVelocities(scene, contactTime / 80, 0.01);
    // Halliday, Resnick & Walker, Fundamentals of Physics, elastic collision in one dimension:
    // v1f = (m1 − m2)/(m1 + m2)·v1i + 2m2/(m1 + m2)·v2i, v2f = 2m1/(m1 + m2)·v1i + (m2 − m1)/(m1 + m2)·v2i.
    const expectedA = ((ma - mb) / (ma + mb)) * va + ((2 * mb) / (ma + mb)) * vb;
    const expectedB = ((2 * ma) / (ma + mb)) * va + ((mb - ma) / (ma + mb)) * vb;
    // 0.1 % of the impact speed at 80 steps per contact (common practice for a resolved contact).
    expect(Math.abs(velocity(0)[0] - expectedA)).toBeLessThan(1e-3 * va);
    expect(Math.abs(velocity(1)[0] - expectedB)).toBeLessThan(1e-3 * va);
    // Goldstein, Poole & Safko 2002, Classical Mechanics, §1.2: no external force, total momentum conserved
    // (to rounding: 1e-12 relative, common practice for double precision sums).
    expect(Math.abs(result.metrics.momentumDriftRelX)).toBeLessThan(1e-12);
    // Goldstein et al. §1.2: conservative forces conserve energy; velocity Verlet's error after the contact
    // is far below the 1 % drift tolerance (common practice).
    expect(Math.abs(result.metrics.energyErrorRel)).toBeLessThan(1e-3);
    expect(result.verdict).toBe("stable");
  });

  it("gives the same run as the pair scene built from the same two discs", () => {
    const pair = headOnPair(0.3, 0.7, 2, 0.5, 0.001, radiusM);
    const setup = buildScene(pair, 1);
    const bodies = [0, 1].map((i) => disc(setup.bodies.x[i], setup.bodies.y[i], setup.bodies.vx[i], setup.bodies.vy[i], setup.bodies.mass[i], setup.bodies.radius[i]));
    const run = (scene: Scene) => simulate(scenario(scene, linearContact(stiffness), "symplectic-euler", 1e-5, 0.01), { stepping: "plain" });
    // Same bodies, same engine: byte-identical metrics (the engine's determinism contract, lib/physics/simulate.ts).
    // amplification is reported for the pair and wall scenes only (a snapshot's first contact may have neighbours).
    expect(run(snapshot(bodies)).metrics).toEqual({ ...run(pair).metrics, amplification: null });
  });

  it("a disc against a wall reverses its normal velocity and keeps the tangential one", () => {
    const [speed, angleDeg, mass] = [3, 30, 0.05];
    const angle = (angleDeg * Math.PI) / 180;
    // Wall y = 0.2 facing −y given with a normal of length 2 (the engine normalises it).
    const scene = snapshot([disc(0, 0.2 - radiusM - 0.001, speed * Math.sin(angle), speed * Math.cos(angle), mass)], [{ normalX: 0, normalY: -1, offsetM: -0.2 }].map((w) => ({ normalX: w.normalX * 2, normalY: w.normalY * 2, offsetM: w.offsetM * 2 })));
    const contactTime = Math.PI / Math.sqrt(stiffness / mass);
    const { result, velocity } = endVelocities(scene, contactTime / 200, 0.01);
    const [vx, vy] = velocity(0);
    // Halliday, Resnick & Walker, Fundamentals of Physics: an elastic bounce off a fixed frictionless wall reverses
    // the normal component and leaves the tangential one (0.1 % of the speed, common practice).
    expect(Math.abs(vy - -speed * Math.cos(angle))).toBeLessThan(1e-3 * speed);
    expect(Math.abs(vx - speed * Math.sin(angle))).toBeLessThan(1e-3 * speed);
    // The wall's impulse is netted out of the momentum drift (lib/physics/types.ts, Metrics): rounding only
    // (1e-9 relative: the wall impulse is summed over the steps, common practice).
    expect(Math.abs(result.metrics.momentumDriftRelY)).toBeLessThan(1e-9);
    expect(result.verdict).toBe("stable");
  });

  it("speedScale multiplies every initial velocity", () => {
    const scene = snapshot([disc(0, 0, 1, -2, 1), disc(1, 1, -0.5, 0.25, 2)], [], { speedScale: 3 });
    const setup = buildScene(scene, 1);
    // Definition of the field (lib/physics/types.ts, SnapshotScene.speedScale).
    expect(Array.from(setup.bodies.vx)).toEqual([3, -1.5]);
    expect(Array.from(setup.bodies.vy)).toEqual([-6, 0.75]);
  });

  it("names initial overlaps by disc number (from 1) and refuses to run them", () => {
    const scene = snapshot([disc(0, 0, 0, 0, 1), disc(0.5, 0, 0, 0, 1), disc(0.09, 0, 0, 0, 1), disc(0.6, 0, 0, 0, 1, 0.05)], [{ normalX: 1, normalY: 0, offsetM: 0.02 }]);
    // By hand: 0–2 overlap 0.1 − 0.09 = 0.01 m = 20 % of 0.05; 1–3: 0.1 − 0.1 = 0 (touching, accepted);
    // discs 0 and 2 stand 0.07 m and 0 m inside the wall x = 0.02 … fractions (0.05 − (−0.02))/0.05 = 1.4, (0.05 − 0.07)/0.05 < 0.
    const overlaps = snapshotOverlaps(scene);
    expect(overlaps.map((o) => [o.a, o.b ?? null, o.wall ?? null])).toEqual([
      [0, 2, null],
      [0, null, 0],
    ]);
    expect(overlaps[0].fraction).toBeCloseTo(0.2, 12);
    expect(overlaps[1].fraction).toBeCloseTo(1.4, 12);
    expect(() => simulate(scenario(scene, linearContact(stiffness), "velocity-verlet", 1e-4, 0.01))).toThrow(/discs 1 and 3/); // bodies 0 and 2, counted from 1 as users count them
  });

  it("accepts overlaps within the tolerance (an exported resting stack)", () => {
    // 0.5 % of the radius: inside SNAPSHOT_OVERLAP_TOLERANCE (1 %, lib/physics/constants.ts).
    const scene = snapshot([disc(0, 0, 0, 0, 1), disc(0.1 - 0.005 * radiusM, 0, 0, 0, 1)]);
    expect(snapshotOverlaps(scene)).toEqual([]);
  });

  it("large snapshots use the grid broad phase and give the same result as all pairs", () => {
    // 100 crates on a 10 × 10 lattice drifting at a floor: above the 64-body all-pairs default.
    const bodies: SnapshotBody[] = [];
    for (let i = 0; i < 100; i++) bodies.push(disc((i % 10) * 0.12, 0.1 + Math.floor(i / 10) * 0.12, ((i * 7) % 5) * 0.1 - 0.2, -0.5, 1 + (i % 3)));
    const scene = snapshot(bodies, [{ normalX: 0, normalY: 1, offsetM: 0 }], { gravityMPerS2: 9.81 });
    const run = (broadPhase: "grid" | "all-pairs") => simulate(scenario(scene, linearContact(1e5), "velocity-verlet", 1e-4, 0.05), { broadPhase });
    // The engine's contract (lib/physics/types.ts, RunOptions.broadPhase): both broad phases give byte-identical results
    // (their work counts differ by design: each examines its own pairs).
    const { work: _gridWork, workUnits: _gridUnits, ...grid } = run("grid");
    const { work: _pairsWork, workUnits: _pairsUnits, ...allPairs } = run("all-pairs");
    expect(grid).toEqual(allPairs);
    // Gravity's and the floor's impulses are netted out: the drift is rounding (1e-9, common practice).
    const result = run("grid");
    expect(Math.abs(result.metrics.momentumDriftRelY)).toBeLessThan(1e-9);
  });

  it("an explicit Euler run with a coarse step gains energy in the contact and is judged for it", () => {
    const scene = snapshot([disc(-0.101, 0, 2, 0, 0.3), disc(0, 0, 0, 0, 0.7)]);
    // Explicit Euler on an undamped spring grows the amplitude by √(1 + (ωh)²) per step (Hairer, Lubich & Wanner 2006,
    // Geometric Numerical Integration, §I.1); at ωh = 1 the energy of the contact doubles per step.
    const omega = Math.sqrt(stiffness / reducedMassKg(0.3, 0.7));
    const result = simulate(scenario(scene, linearContact(stiffness), "explicit-euler", 1 / omega, 0.02));
    expect(result.metrics.energyErrorRel).toBeGreaterThan(0.01);
    expect(["energy-drift", "exploded"]).toContain(result.verdict);
  });
});
