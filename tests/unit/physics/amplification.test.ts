/**
 * The amplification metric (rebound speed over the model's) against the exact discrete solution of
 * the undamped linear contact.
 *
 * Reference (independent of the engine's stepping loop): on a linear spring δ'' = −ω²δ both
 * symplectic Euler and velocity Verlet advance (δ, u = δ') by a 2 × 2 matrix M with trace
 * t = 2 − (ωh)² and determinant 1 (Hairer, Lubich & Wanner, Geometric Numerical Integration, 2nd
 * ed., Springer 2006, the Störmer–Verlet method on the harmonic oscillator). By Cayley–Hamilton,
 * M^n = U_{n−1}(t/2)·M − U_{n−2}(t/2)·I with U the Chebyshev polynomials of the second kind, in
 * closed form U_n(cos θ) = sin((n+1)θ)/sin θ for |t| < 2 and U_n(−cosh φ) = (−1)^n sinh((n+1)φ)/sinh φ
 * for t < −2 (Abramowitz & Stegun, Handbook of Mathematical Functions, 1964, 22.3.16 and the
 * hyperbolic continuation). The clamped contact force is zero before the contact and after it, so
 * a contact is: free flight to the first overlap, the linear map while δ > 0 (velocity Verlet: half
 * kicks at entry and exit, whose other half sees no force), and the first δ ≤ 0 ends it.
 */
import { describe, expect, it } from "vitest";
import { simulate, type IntegratorName } from "@/lib/physics";
import { linearContact, scenario } from "./fixtures";

type Matrix = [number, number, number, number]; // [a, b, c, d] acting on (δ, u): δ' = aδ + bu, u' = cδ + du

/** U_n(x) of the second kind in closed form (x = cos θ, or x = −cosh φ). */
function chebyshevU(n: number, x: number): number {
  if (n === -1) return 0;
  if (Math.abs(x) < 1) {
    const theta = Math.acos(x);
    return Math.sin((n + 1) * theta) / Math.sin(theta);
  }
  if (x < -1) {
    const phi = Math.acosh(-x);
    return (n % 2 === 0 ? 1 : -1) * (Math.sinh((n + 1) * phi) / Math.sinh(phi));
  }
  throw new Error(`x = ${x} is not covered`);
}

function power(m: Matrix, n: number): Matrix {
  if (n === 0) return [1, 0, 0, 1];
  const half = (m[0] + m[3]) / 2;
  const p = chebyshevU(n - 1, half);
  const q = chebyshevU(n - 2, half);
  return [p * m[0] - q, p * m[1], p * m[2], p * m[3] - q];
}

function oneStepMap(integrator: IntegratorName, omega: number, h: number): Matrix {
  const w2 = (omega * h) ** 2;
  if (integrator === "symplectic-euler") return [1 - w2, h, -h * omega * omega, 1]; // kick, then drift
  return [1 - w2 / 2, h, -(h * omega * omega / 2) * (2 - w2 / 2), 1 - w2 / 2];
}

/** |u_out| / |u_in| of the exact discrete contact entered with overlap δ0 > 0 at approach speed v. */
function exactRebound(integrator: IntegratorName, omega: number, h: number, delta0: number, v: number): number {
  const m = oneStepMap(integrator, omega, h);
  // Velocity Verlet's entry step: only the half kick at the new (overlapping) position acts.
  const u0 = integrator === "velocity-verlet" ? v - (h * omega * omega * delta0) / 2 : v;
  for (let n = 1; n < 100_000; n++) {
    const p = power(m, n);
    const delta = p[0] * delta0 + p[1] * u0;
    if (delta <= 0) {
      let u = p[2] * delta0 + p[3] * u0;
      // Velocity Verlet's exit step: the half kick at δ ≤ 0 sees no force (the map assumed −ω²δ).
      if (integrator === "velocity-verlet") u += (h * omega * omega * delta) / 2;
      return Math.abs(u) / v;
    }
  }
  throw new Error("contact did not end");
}

describe("amplification against the exact one-step maps of the linear contact", () => {
  const reducedMassKg = 0.05;
  const stiffness = 1e4;
  const omega = Math.sqrt(stiffness / reducedMassKg);
  const speed = 0.1;
  for (const integrator of ["symplectic-euler", "velocity-verlet"] as const) {
    for (const omegaH of [0.3, 1.3, 1.9, 2.5, 4]) {
      for (const phase of [0.13, 0.47, 0.81]) {
        it(`${integrator}, ω·h = ${omegaH}, entry ${phase} of a step short of a whole step`, () => {
          const h = omegaH / omega;
          // Gap of (20 + phase) steps of free flight: the first overlap is (1 − phase)·v·h.
          const gap = (20 + phase) * speed * h;
          const run = simulate(
            scenario({ kind: "pair", massAKg: 0.1, massBKg: 0.1, radiusAM: 0.05, radiusBM: 0.05, speedAMPerS: speed, speedBMPerS: 0, offsetFraction: 0, gapM: gap }, linearContact(stiffness), integrator, h, 40 * h + 200 / omega, {
              tolerances: { energyDriftRel: 0.01, maxOverlapFraction: 100, blowUpEnergyFactor: 1e300 },
              verdictRules: 2,
            }),
          );
          const expected = exactRebound(integrator, omega, h, (1 - phase) * speed * h, speed);
          expect(run.metrics.amplification).not.toBeNull();
          // Rounding only: positions advance by repeated additions; relative 1e-6.
          expect(Math.abs((run.metrics.amplification as number) - expected) / expected).toBeLessThan(1e-6);
          expect(run.metrics.maxOmegaH).toBeCloseTo(omegaH, 12);
          if (omegaH >= 2) expect(run.verdict).toBe("step-unstable");
        });
      }
    }
  }

  it("grows past the bound as the map's spectral radius says: |λ| = (ωh)²/2 − 1 + √(((ωh)²/2 − 1)² − 1)", () => {
    // For ω·h = 4 the spectral radius is 7 + √48 ≈ 13.93 per step: a contact of a couple of steps
    // returns the bodies an order of magnitude faster (the single-pair finding, 2.8–13 at ω·h = 4).
    const h = 4 / omega;
    const radius = 7 + Math.sqrt(48);
    const rebounds = [0.13, 0.47, 0.81].map((phase) => exactRebound("symplectic-euler", omega, h, (1 - phase) * speed * h, speed));
    expect(Math.max(...rebounds)).toBeGreaterThan(2);
    expect(Math.max(...rebounds)).toBeLessThan(radius * radius);
  });
});
