/**
 * (k, c) ↔ (natural frequency, damping ratio) against the definitions of the damped single-degree-
 * of-freedom oscillator m·ẍ + c·ẋ + k·x = 0 in Rao, Mechanical Vibrations (5th ed., 2011), ch. 2
 * "Free vibration of single-degree-of-freedom systems": ω_n = √(k/m), f_n = ω_n/2π,
 * c_c = 2mω_n = 2√(km), ζ = c/c_c, damped frequency ω_d = ω_n√(1 − ζ²), logarithmic decrement
 * δ = 2πζ/√(1 − ζ²). The motion itself comes from an independent integrator (mathjs solveODE).
 */
import { describe, expect, it } from "vitest";
import { solveODE } from "./fixtures";
import {
  criticalDampingNsPerM,
  dampingForRatioNsPerM,
  dampingRatioOf,
  naturalFrequencyHz,
  phasePerSubstep,
  stiffnessForNaturalFrequencyNPerM,
  toFrequencyForm,
  toSpringDashpot,
} from "@/lib/physics/frequency";
import { linearDampingRatio, reducedMassKg } from "@/lib/physics";

describe("natural frequency and damping ratio", () => {
  it("follows the definitions on values worked by hand", () => {
    // Rao 2011 ch. 2: f_n = √(k/m)/2π. k = 4π² N/m on 1 kg is ω_n = 2π rad/s, exactly 1 Hz.
    expect(naturalFrequencyHz(4 * Math.PI ** 2, 1)).toBeCloseTo(1, 14);
    // k = 1e6 N/m on a 0.25 kg pairing: ω_n = 2000 rad/s, f_n = 2000/2π = 318.3098861837907 Hz.
    expect(naturalFrequencyHz(1e6, 0.25)).toBeCloseTo(318.3098861837907, 9);
    // c_c = 2√(km) = 2√(1e6·0.25) = 1000 N·s/m; c = 100 is ζ = 0.1 (Rao 2011 ch. 2, ζ = c/c_c).
    expect(criticalDampingNsPerM(1e6, 0.25)).toBeCloseTo(1000, 10);
    expect(dampingRatioOf(100, 1e6, 0.25)).toBeCloseTo(0.1, 14);
    // Back: 1 Hz on 1 kg is k = 4π²; ζ = 1 at 1 Hz on 1 kg is c = c_c = 2mω_n = 4π.
    expect(stiffnessForNaturalFrequencyNPerM(1, 1)).toBeCloseTo(4 * Math.PI ** 2, 12);
    expect(dampingForRatioNsPerM(1, 1, 1)).toBeCloseTo(4 * Math.PI, 12);
    // Agrees with the engine's own ζ helper (lib/physics/analytic.ts), written separately.
    expect(dampingRatioOf(37, 2.5e5, 0.4)).toBeCloseTo(linearDampingRatio(37, 2.5e5, 0.4), 14);
  });

  it("round-trips (k, c) → (f, ζ) → (k, c) over twelve decades of stiffness", () => {
    const form = { frequencyHz: 0, dampingRatio: 0 };
    const back = { stiffnessNPerM: 0, dampingNsPerM: 0 };
    for (const k of [1, 1e2, 1e4, 1e6, 1e8, 1e10, 1e12]) {
      for (const m of [1e-3, reducedMassKg(0.6, 3), 250]) {
        for (const c of [0, 0.01 * criticalDampingNsPerM(k, m), criticalDampingNsPerM(k, m), 3 * criticalDampingNsPerM(k, m)]) {
          toFrequencyForm(k, c, m, form);
          toSpringDashpot(form.frequencyHz, form.dampingRatio, m, back);
          expect(back.stiffnessNPerM / k).toBeCloseTo(1, 12);
          if (c === 0) expect(back.dampingNsPerM).toBe(0);
          else expect(back.dampingNsPerM / c).toBeCloseTo(1, 12);
        }
      }
    }
  });

  it("gives the damped period and logarithmic decrement of the actual motion", () => {
    // An invented crate pairing tuned at 12 Hz, ζ = 0.05; m = reduced mass of 3 kg and 0.6 kg.
    const m = reducedMassKg(3, 0.6);
    const { stiffnessNPerM: k, dampingNsPerM: c } = toSpringDashpot(12, 0.05, m);
    const run = solveODE((_t, [x, v]) => [v, (-k * x - c * v) / m], [0, 0.5], [0.01, 0], { method: "RK45", tol: 1e-12, maxStep: 1e-4, maxIter: 1e6 });
    // Successive maxima of x (sampled finely enough by maxStep) and the times between them.
    const peaks: { t: number; x: number }[] = [];
    for (let i = 1; i + 1 < run.t.length; i++) {
      const [a, b, d] = [run.y[i - 1][0], run.y[i][0], run.y[i + 1][0]];
      if (b > a && b >= d && b > 0) peaks.push({ t: run.t[i], x: b });
    }
    expect(peaks.length).toBeGreaterThan(4);
    const periodS = (peaks[4].t - peaks[0].t) / 4;
    const zeta = 0.05;
    // Rao 2011 ch. 2: τ_d = 2π/ω_d, ω_d = ω_n√(1 − ζ²).
    expect(periodS).toBeCloseTo(1 / (12 * Math.sqrt(1 - zeta * zeta)), 4);
    // Rao 2011 ch. 2: δ = ln(x_1/x_2) = 2πζ/√(1 − ζ²).
    const decrement = Math.log(peaks[0].x / peaks[1].x);
    expect(decrement).toBeCloseTo((2 * Math.PI * zeta) / Math.sqrt(1 - zeta * zeta), 3);
  });

  it("critical damping (ζ = 1) returns without crossing zero; ζ just below does cross", () => {
    const m = 0.5;
    const crosses = (zeta: number) => {
      const { stiffnessNPerM: k, dampingNsPerM: c } = toSpringDashpot(5, zeta, m);
      const run = solveODE((_t, [x, v]) => [v, (-k * x - c * v) / m], [0, 2], [0.01, 0], { method: "RK45", tol: 1e-12, maxStep: 1e-3, maxIter: 1e6 });
      return run.y.some(([x]) => x < -1e-9);
    };
    // Rao 2011 ch. 2: a critically damped system is aperiodic; an underdamped one oscillates.
    expect(crosses(1)).toBe(false);
    expect(crosses(0.7)).toBe(true);
  });

  it("phase per substep is 2π·f·h, the quantity of the bound ω·h < 2", () => {
    // ω_n·h at f = 1/(π h) is exactly 2: the symplectic Euler / velocity Verlet stability limit
    // for the undamped spring (Hairer, Lubich & Wanner, Geometric Numerical Integration, 2006, §I.1 — the linear stability interval of Störmer–Verlet).
    const h = 1 / 960;
    expect(phasePerSubstep(1 / (Math.PI * h), h)).toBeCloseTo(2, 14);
  });
});
