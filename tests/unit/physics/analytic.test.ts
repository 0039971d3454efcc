import { describe, expect, it } from "vitest";
import { solveODE } from "./fixtures";
import { gamma } from "mathjs";
import {
  HERTZ_SHAPE_INTEGRAL,
  dimensionlessForceContactDuration,
  effectiveModulusSameMaterialPa,
  explicitEulerEnergyGrowthPerStep,
  hertzContactDurationS,
  hertzMaxOverlapM,
  hertzStiffnessFromModulus,
  linearContactDurationS,
  linearDampingRatioForRestitution,
  linearDampingRatioOverlapCriterion,
  linearMaxOverlapM,
  linearRestitutionForDampingRatio,
  linearRestitutionOverlapCriterion,
  maxStableSubstepS,
  reducedMassKg,
} from "@/lib/physics";

describe("analytic helpers", () => {
  it("reduced mass and the wall limit", () => {
    expect(reducedMassKg(2, 3)).toBeCloseTo(1.2, 15); // m1m2/(m1+m2) = 6/5 (definition)
    expect(reducedMassKg(2, Infinity)).toBe(2); // a static wall has infinite mass (definition)
  });

  it("Hertz shape integral equals (2/5)√π Γ(2/5)/Γ(9/10)", () => {
    // Independent reference: mathjs gamma; the closed form is the Beta function B(2/5, 1/2)·(2/5).
    const reference = (0.4 * Math.sqrt(Math.PI) * (gamma(0.4) as number)) / (gamma(0.9) as number);
    expect(HERTZ_SHAPE_INTEGRAL).toBeCloseTo(reference, 12);
  });

  it("Hertz contact time reproduces Johnson's 2.87 (m*²/(R* E*² v))^{1/5}", () => {
    // Johnson 1985, Contact Mechanics, §11.1: t_c ≈ 2.87 (m*²/(R* E*² v))^{1/5}; δ_max = (15 m* v²/(16 E* √R*))^{2/5}.
    const massKg = 0.17; // an invented billiard-like puck
    const radiusM = 0.028;
    const eStar = effectiveModulusSameMaterialPa(5e9, 0.35);
    const rStar = radiusM / 2;
    const mStar = massKg / 2;
    const speed = 1.3;
    const kH = hertzStiffnessFromModulus(eStar, rStar);
    const johnsonTime = 2.87 * Math.pow((mStar * mStar) / (rStar * eStar * eStar * speed), 0.2);
    const johnsonOverlap = Math.pow((15 * mStar * speed * speed) / (16 * eStar * Math.sqrt(rStar)), 0.4);
    expect(relative(hertzContactDurationS(kH, mStar, speed), johnsonTime)).toBeLessThan(2e-3); // Johnson's constant is rounded to 3 digits
    expect(relative(hertzMaxOverlapM(kH, mStar, speed), johnsonOverlap)).toBeLessThan(1e-12);
  });

  it("linear contact: Luding's t_c = π/ω and δ_max = v/ω when undamped", () => {
    // Luding 2008, Eur. J. Environ. Civ. Eng. 12, "Introduction to discrete element methods": t_c = π/ω, δ_max = v/ω0.
    const k = 2e4;
    const m = 0.5;
    expect(linearContactDurationS(k, m)).toBeCloseTo(Math.PI / Math.sqrt(k / m), 14);
    expect(linearMaxOverlapM(k, m, 3)).toBeCloseTo(3 / Math.sqrt(k / m), 14);
    expect(dimensionlessForceContactDuration(0)).toBe(Math.PI);
  });

  it("overlap-criterion restitution round-trips with ζ = −ln e/√(π² + ln² e)", () => {
    // Luding 2008, r = exp(−η0 t_c) with t_c = π/ω ⇒ ζ = −ln e/√(π² + ln² e).
    for (const e of [0.05, 0.3, 0.7, 0.95]) expect(linearRestitutionOverlapCriterion(linearDampingRatioOverlapCriterion(e))).toBeCloseTo(e, 12);
  });

  it("force-criterion restitution equals the velocity at zero force of an independently integrated clamped spring–dashpot", () => {
    // Reference: mathjs solveODE (Dormand–Prince RK45, tol 1e-10) on δ'' = −2ζδ' − δ with ω0 = 1, stopped where δ + 2ζδ' = 0.
    for (const zeta of [0.05, 0.3, 0.8, 1.5]) {
      const tEnd = dimensionlessForceContactDuration(zeta);
      const solution = solveODE((_t: number, y: number[]) => [y[1], -2 * zeta * y[1] - y[0]], [0, tEnd], [0, 1], { tol: 1e-11, maxStep: 1e-2, maxIter: 1e6 });
      const last = solution.y[solution.y.length - 1];
      expect(Math.abs(last[0] + 2 * zeta * last[1])).toBeLessThan(1e-7); // the force is zero at t_c
      expect(-last[1]).toBeCloseTo(linearRestitutionForDampingRatio(zeta), 7); // e = −δ'(t_c)/δ'(0)
    }
  });

  it("Schwager & Pöschel's e(ζ) is continuous at the regime borders and monotone, and its inverse round-trips", () => {
    // Schwager & Pöschel 2007, Granular Matter 9: three branches meeting at ζ = 1/√2 (e = exp(−π/2)) and ζ = 1 (e = exp(−2)).
    expect(linearRestitutionForDampingRatio(Math.SQRT1_2)).toBeCloseTo(Math.exp(-Math.PI / 2), 12);
    expect(linearRestitutionForDampingRatio(1)).toBeCloseTo(Math.exp(-2), 12);
    expect(linearRestitutionForDampingRatio(1 + 1e-7)).toBeCloseTo(Math.exp(-2), 6);
    let previous = 1;
    for (let zeta = 0.01; zeta < 20; zeta *= 1.1) {
      const e = linearRestitutionForDampingRatio(zeta);
      expect(e).toBeLessThan(previous);
      previous = e;
    }
    for (const e of [0.01, 0.2, 0.5, 0.9, 0.999]) expect(linearRestitutionForDampingRatio(linearDampingRatioForRestitution(e))).toBeCloseTo(e, 12);
  });

  it("stability bound and explicit-Euler growth", () => {
    // Hairer, Lubich & Wanner 2006, Geometric Numerical Integration: stable for ω·dt < 2. Explicit Euler: E_{n+1} = (1 + ω²dt²) E_n.
    expect(maxStableSubstepS(400, 1)).toBeCloseTo(0.1, 15);
    expect(explicitEulerEnergyGrowthPerStep(20, 0.01)).toBeCloseTo(1.04, 15);
  });
});

function relative(actual: number, expected: number): number {
  return Math.abs(actual - expected) / Math.abs(expected);
}
