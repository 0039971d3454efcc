import { describe, expect, it } from "vitest";
import {
  linearDampingCoefficientNsPerM,
  linearForceContactDurationS,
  linearContactDurationS,
  linearMaxOverlapM,
  linearRestitutionForDampingRatio,
  linearRestitutionOverlapCriterion,
  linearDampingRatioForRestitution,
  reducedMassKg,
  simulate,
} from "@/lib/physics";
import { headOnPair, linearContact, relativeError, scenario } from "./fixtures";

// Two invented air-hockey pucks: 0.2 kg and 0.3 kg, k = 5e4 N/m, approach at 1.5 m/s.
const massA = 0.2;
const massB = 0.3;
const stiffness = 5e4;
const speed = 1.5;
const mEff = reducedMassKg(massA, massB);
const omega = Math.sqrt(stiffness / mEff);
const contactTime = Math.PI / omega;
const dtS = contactTime / 2000;

describe("linear spring–dashpot contact", () => {
  it("undamped duration and maximum overlap match Luding's t_c = π/ω and δ_max = v/ω", () => {
    const result = simulate(scenario(headOnPair(massA, massB, speed), linearContact(stiffness), "velocity-verlet", dtS, 3 * contactTime));
    // Luding 2008, Eur. J. Environ. Civ. Eng. 12, t_c = π/ω; Schäfer, Dippel & Wolf 1996, J. Phys. I France 6 (same linear model).
    expect(relativeError(result.metrics.contactDurationS!, linearContactDurationS(stiffness, mEff))).toBeLessThan(1e-5);
    // Luding 2008, δ_max = v/ω for the undamped spring.
    expect(relativeError(result.metrics.maxOverlapFraction * 0.05, speed / omega)).toBeLessThan(1e-5);
    expect(result.metrics.effectiveRestitution!).toBeCloseTo(1, 5); // elastic (energy conservation)
  });

  it("damped maximum overlap matches Luding's δ_max = (v/ω) e^{−γ t_m} sin(ω t_m)", () => {
    const zeta = 0.2;
    const c = linearDampingCoefficientNsPerM(zeta, stiffness, mEff);
    const result = simulate(scenario(headOnPair(massA, massB, speed), linearContact(stiffness, { kind: "coefficient", value: c }), "velocity-verlet", dtS, 3 * contactTime));
    // Luding 2008: the clamp is inactive until after δ_max, so the unclamped solution holds there.
    // Bound 2ζω0·dt: the entry-step dashpot jump (see the restitution test below).
    expect(relativeError(result.metrics.maxOverlapFraction * 0.05, linearMaxOverlapM(stiffness, mEff, speed, c))).toBeLessThan(2 * zeta * omega * dtS);
  });

  it.each([0.05, 0.3, 0.75, 1.2])("restitution and duration at ζ = %s follow the force-ends criterion of Schwager & Pöschel", (zeta) => {
    const c = linearDampingCoefficientNsPerM(zeta, stiffness, mEff);
    const result = simulate(scenario(headOnPair(massA, massB, speed), linearContact(stiffness, { kind: "coefficient", value: c }), "velocity-verlet", dtS, 4 * contactTime));
    // Schwager & Pöschel 2007, Granular Matter 9, e = exp(−γ t_c) with t_c where the clamped force returns to zero.
    // The dashpot force jumps to c·v at first touch, which falls inside a step: the impulse is off by
    // at most c·v·dt, so e is off by at most c·dt/m_eff = 2ζω0·dt (derived bound).
    const entryBound = 2 * zeta * omega * dtS;
    expect(Math.abs(result.metrics.effectiveRestitution! - linearRestitutionForDampingRatio(zeta))).toBeLessThan(entryBound);
    expect(relativeError(result.metrics.contactDurationS!, linearForceContactDurationS(stiffness, mEff, c))).toBeLessThan(entryBound);
    // Luding's overlap-ends value differs (and is not what the clamped model gives) for visible damping.
    if (zeta >= 0.3) expect(Math.abs(result.metrics.effectiveRestitution! - linearRestitutionOverlapCriterion(zeta))).toBeGreaterThan(0.01);
  });

  it.each([0.2, 0.5, 0.9])("a target restitution e = %s is what the run measures, for every mass pair and speed", (target) => {
    for (const [ma, mb, v] of [
      [0.2, 0.3, 1.5],
      [1, 1, 0.4],
      [0.05, 2, 3],
    ]) {
      const localOmega = Math.sqrt(stiffness / reducedMassKg(ma, mb));
      const localDtS = Math.PI / localOmega / 2000;
      const result = simulate(scenario(headOnPair(ma, mb, v), linearContact(stiffness, { kind: "restitution", value: target }), "velocity-verlet", localDtS, 8 * Math.PI / localOmega));
      // The target is the conversion's contract; bound 2ζω0·dt from the entry-step dashpot jump (see above).
      const zeta = linearDampingRatioForRestitution(target);
      expect(Math.abs(result.metrics.effectiveRestitution! - target)).toBeLessThan(2 * zeta * localOmega * localDtS);
      expect(result.verdict).not.toBe("energy-drift");
    }
  });
});
