import { describe, expect, it } from "vitest";
import {
  effectiveModulusSameMaterialPa,
  effectiveRadiusM,
  hertzContactDurationS,
  hertzDimensionlessDampingForRestitution,
  hertzMaxOverlapM,
  hertzRestitutionForDimensionlessDamping,
  hertzRestitutionEstimate,
  hertzStiffnessFromModulus,
  reducedMassKg,
  simulate,
  type Scene,
} from "@/lib/physics";
import { relativeError, scenario } from "./fixtures";

// Invented props: rubber-coated steel "Boltball" spheres of Gearwhistle Games. Properties in the
// spirit of Chung & Ooi 2011's particle-impact benchmarks, derived here from Johnson's closed forms.
const youngsModulusPa = 7e9;
const poissonRatio = 0.3;
const radiusM = 0.01;
const massKg = 0.0327;

function materialContact(damping: { kind: "none" } | { kind: "restitution"; value: number } | { kind: "coefficient"; value: number } = { kind: "none" }) {
  return { model: "hertz" as const, material: { youngsModulusPa, poissonRatio }, damping };
}

function pair(speedMPerS: number, massBKg = massKg, radiusBM = radiusM): Scene {
  return { kind: "pair", massAKg: massKg, massBKg, radiusAM: radiusM, radiusBM, speedAMPerS: speedMPerS, speedBMPerS: 0, offsetFraction: 0, gapM: 1e-4 };
}

describe("Hertz contact", () => {
  it.each([0.2, 1, 5])("undamped sphere–sphere impact at %s m/s: Johnson's contact time and maximum overlap", (speed) => {
    const eStar = effectiveModulusSameMaterialPa(youngsModulusPa, poissonRatio);
    const rStar = effectiveRadiusM(radiusM, radiusM);
    const mStar = reducedMassKg(massKg, massKg);
    const kH = hertzStiffnessFromModulus(eStar, rStar);
    const expectedTime = hertzContactDurationS(kH, mStar, speed);
    const result = simulate(scenario(pair(speed), materialContact(), "velocity-verlet", expectedTime / 3000, 4 * expectedTime + 1e-4 / speed));
    // Johnson 1985, Contact Mechanics, §11.1: t_c = 2.87(m*²/(R*E*²v))^{1/5}, δ_max = (15m*v²/(16E*√R*))^{2/5}.
    expect(relativeError(result.metrics.contactDurationS!, expectedTime)).toBeLessThan(1e-4);
    expect(relativeError(result.metrics.maxOverlapFraction * radiusM, hertzMaxOverlapM(kH, mStar, speed))).toBeLessThan(1e-5);
    expect(result.metrics.effectiveRestitution!).toBeCloseTo(1, 5); // elastic
  });

  it("sphere against a wall of the same material uses R* = R and m* = m", () => {
    const speed = 0.8;
    const kH = hertzStiffnessFromModulus(effectiveModulusSameMaterialPa(youngsModulusPa, poissonRatio), radiusM);
    const expectedTime = hertzContactDurationS(kH, massKg, speed);
    const scene: Scene = { kind: "wall", massKg, radiusM, speedMPerS: speed, angleDeg: 0, gapM: 1e-4 };
    const result = simulate(scenario(scene, materialContact(), "velocity-verlet", expectedTime / 3000, 4 * expectedTime + 1e-4 / speed));
    // Johnson 1985, §11.1 with the wall as the second body.
    expect(relativeError(result.metrics.contactDurationS!, expectedTime)).toBeLessThan(1e-4);
    expect(relativeError(result.metrics.maxOverlapFraction * radiusM, hertzMaxOverlapM(kH, massKg, speed))).toBeLessThan(1e-5);
  });

  it("a rigid wall: Johnson's contact time with 1/E* = (1 − ν²)/E, 2^(−2/5) of the disc-material wall's", () => {
    const speed = 0.8;
    // Johnson 1985, Contact Mechanics, §4.2 and §11.1: a sphere on a rigid half-space, E* = E/(1 − ν²), R* = R, m* = m.
    const rigidStiffness = hertzStiffnessFromModulus(youngsModulusPa / (1 - poissonRatio * poissonRatio), radiusM);
    const expectedTime = hertzContactDurationS(rigidStiffness, massKg, speed);
    const scene: Scene = { kind: "wall", massKg, radiusM, speedMPerS: speed, angleDeg: 0, gapM: 1e-4 };
    const run = (wall: "rigid" | "disc-material" | undefined) =>
      simulate(scenario(scene, { ...materialContact(), ...(wall ? { wall } : {}) }, "velocity-verlet", expectedTime / 3000, 4 * expectedTime + 1e-4 / speed, { verdictRules: 3 })).metrics;
    const rigid = run("rigid");
    expect(relativeError(rigid.contactDurationS!, expectedTime)).toBeLessThan(1e-5);
    expect(relativeError(rigid.maxOverlapFraction * radiusM, hertzMaxOverlapM(rigidStiffness, massKg, speed))).toBeLessThan(1e-5);
    // t_c ∝ k_H^{−2/5} (Johnson §11.1) and k_H doubles against a rigid wall: the disc-material wall lasts 2^{2/5} = 1.32 times as long.
    const discMaterial = run("disc-material");
    expect(discMaterial.contactDurationS! / rigid.contactDurationS!).toBeCloseTo(Math.pow(2, 0.4), 4);
    expect(run(undefined).contactDurationS).toBe(discMaterial.contactDurationS); // absent: the disc's material, as before
    // Disc–disc contacts keep the discs' material whatever the wall is.
    const pairContact = { ...materialContact(), wall: "rigid" as const };
    const pairTime = hertzContactDurationS(hertzStiffnessFromModulus(effectiveModulusSameMaterialPa(youngsModulusPa, poissonRatio), effectiveRadiusM(radiusM, radiusM)), massKg / 2, 1);
    const pairRun = simulate(scenario(pair(1), pairContact, "velocity-verlet", pairTime / 3000, 4 * pairTime + 1e-4, { verdictRules: 3 }));
    expect(relativeError(pairRun.metrics.contactDurationS!, pairTime)).toBeLessThan(1e-5);
  });

  it("Tsuji-type damping: restitution is independent of impact speed and equals the target", () => {
    const target = 0.6;
    const measured = [0.1, 1, 10].map((speed) => {
      const kH = hertzStiffnessFromModulus(effectiveModulusSameMaterialPa(youngsModulusPa, poissonRatio), effectiveRadiusM(radiusM, radiusM));
      const time = hertzContactDurationS(kH, massKg / 2, speed);
      return simulate(scenario(pair(speed), materialContact({ kind: "restitution", value: target }), "velocity-verlet", time / 3000, 4 * time + 1e-4 / speed)).metrics.effectiveRestitution!;
    });
    // Tsuji, Tanaka & Ishida 1992 (damping ∝ δ^{1/4} makes e speed-independent) — common practice in DEM; target from the conversion.
    for (const e of measured) expect(Math.abs(e - target)).toBeLessThan(2e-4);
  });

  it("the dimensionless conversion round-trips and decreases monotonically", () => {
    let previous = 1;
    for (const beta of [0.05, 0.2, 0.5, 1, 2, 4]) {
      const e = hertzRestitutionForDimensionlessDamping(beta);
      expect(e).toBeLessThan(previous);
      previous = e;
      expect(hertzDimensionlessDampingForRestitution(e)).toBeCloseTo(beta, 8);
    }
  });

  it("the tabulated estimate used for verdicts agrees with the reference integration", () => {
    // Reference: the engine's own RK4 integration at the finer reference step (tested above against the simulation).
    for (let beta = 1e-3; beta < 1e3; beta *= 1.7) expect(Math.abs(hertzRestitutionEstimate(beta) - hertzRestitutionForDimensionlessDamping(beta))).toBeLessThan(1e-5);
  });

  it("a Hertz run with damping given as η measures the restitution its β predicts", () => {
    const eta = 0.5;
    const kH = hertzStiffnessFromModulus(effectiveModulusSameMaterialPa(youngsModulusPa, poissonRatio), effectiveRadiusM(radiusM, radiusM));
    const beta = eta / Math.sqrt(reducedMassKg(massKg, massKg) * kH);
    const time = hertzContactDurationS(kH, massKg / 2, 1);
    const result = simulate(scenario(pair(1), materialContact({ kind: "coefficient", value: eta }), "velocity-verlet", time / 3000, 4 * time + 1e-4));
    // Tsuji-type scaling (β = η/√(m*k_H)); reference value from the dimensionless integration.
    expect(Math.abs(result.metrics.effectiveRestitution! - hertzRestitutionForDimensionlessDamping(beta))).toBeLessThan(2e-4);
    expect(result.verdict).toBe("stable");
  });
});
