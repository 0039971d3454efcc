/**
 * The damping of a target restitution under both contact-end criteria (exports for game engines):
 * force-returns-to-zero (Kickdrift's clamped engine) and overlap-returns-to-zero (an engine that
 * does not clamp), for the linear spring–dashpot (ζ) and the Tsuji-damped Hertz contact (β).
 */
import { describe, expect, it } from "vitest";
import { linearDampingRatioOverlapCriterion, linearRestitutionForDampingRatio, linearRestitutionOverlapCriterion } from "@/lib/physics";
import { restitutionDamping } from "@/lib/physics/damping";
import { envelopeDamping } from "@/lib/sweeps/envelope";
import type { ExpandedAxis } from "@/lib/sweeps/grid";
import { solveODE } from "./fixtures";

/**
 * Restitution of one dimensionless impact x'' = −force(x, x'), x(0) = 0⁺, x'(0) = 1, ended at the
 * first sign change of `end(x, x')`; e = −x' there. Reference: mathjs solveODE (Dormand–Prince RK45).
 */
function referenceRestitution(force: (x: number, v: number) => number, end: (x: number, v: number) => number, start: [number, number], t0: number): number {
  const rhs = (_t: number, y: number[]) => [y[1], -force(y[0], y[1])];
  const solution = solveODE(rhs, [t0, 6], start, { tol: 1e-12, firstStep: t0 > 0 ? t0 : 1e-6, maxStep: 0.003, maxIter: 1e6 });
  const i = solution.y.findIndex((y, index) => index > 0 && end(y[0], y[1]) <= 0);
  if (i < 1) throw new Error("the contact did not end");
  // Linear interpolation between the points around the crossing (≤ 0.003 apart: error ~1e-6); the
  // solver may crawl into a kink at x = 0 with points at one time, which the interpolation tolerates.
  const g0 = end(solution.y[i - 1][0], solution.y[i - 1][1]);
  const g1 = end(solution.y[i][0], solution.y[i][1]);
  const fraction = g0 / (g0 - g1);
  return -(solution.y[i - 1][1] + fraction * (solution.y[i][1] - solution.y[i - 1][1]));
}

function linearForce(zeta: number) {
  return (x: number, v: number) => x + 2 * zeta * v; // ω0 = 1
}

function hertzForce(beta: number) {
  return (x: number, v: number) => Math.pow(Math.max(x, 0), 1.5) + beta * Math.pow(Math.max(x, 0), 0.25) * v;
}

/** Series start of the Hertz impact (the δ^{1/4} damping is not smooth at t = 0): x ≈ t − (16/45)βt^{9/4}. */
function hertzStart(beta: number, t0: number): [number, number] {
  return [t0 - (16 / 45) * beta * Math.pow(t0, 2.25), 1 - 0.8 * beta * Math.pow(t0, 1.25)];
}

describe("damping for both contact-end criteria", () => {
  it.each([0.4, 0.8])("linear, e = %s: ζ for force-zero (Schwager & Pöschel 2007) and overlap-zero (Luding 2008), checked by an independent ODE solution", (e) => {
    const damping = restitutionDamping("linear", e);
    const forceZero = (damping.forceZero as { dampingRatio: number }).dampingRatio;
    const overlapZero = (damping.overlapZero as { dampingRatio: number }).dampingRatio;
    // Closed forms: Schwager & Pöschel 2007, Granular Matter 9, e = exp(−γ t_c) with their t_c; Luding 2008, e = exp(−ζπ/√(1−ζ²)).
    expect(linearRestitutionForDampingRatio(forceZero)).toBeCloseTo(e, 10);
    expect(linearRestitutionOverlapCriterion(overlapZero)).toBeCloseTo(e, 12);
    // Independent: mathjs RK45 of x'' = −x − 2ζx', ended where the force x + 2ζx' (resp. the overlap x) returns to zero.
    expect(referenceRestitution(linearForce(forceZero), linearForce(forceZero), [0, 1], 0)).toBeCloseTo(e, 5);
    expect(referenceRestitution(linearForce(overlapZero), (x) => x, [0, 1], 0)).toBeCloseTo(e, 5);
  });

  it("linear at e = 0.8: the force-zero damping is 4.9 % above the overlap-zero one", () => {
    const damping = restitutionDamping("linear", 0.8);
    const ratio = (damping.forceZero as { dampingRatio: number }).dampingRatio / (damping.overlapZero as { dampingRatio: number }).dampingRatio;
    // Both closed forms above (Schwager & Pöschel 2007; Luding 2008): 0.074355 / 0.070850.
    expect(ratio).toBeCloseTo(1.0495, 4);
  });

  it.each([0.4, 0.8])("Hertz, e = %s: β for both criteria, checked by an independent ODE solution", (e) => {
    const damping = restitutionDamping("hertz", e);
    const forceZero = (damping.forceZero as { beta: number }).beta;
    const overlapZero = (damping.overlapZero as { beta: number }).beta;
    expect(forceZero).toBeGreaterThan(overlapZero); // the clamp ends the contact earlier, so more damping is needed
    const t0 = 1e-6;
    // Independent: mathjs RK45 of x'' = −x^{3/2} − βx^{1/4}x' (Tsuji, Tanaka & Ishida 1992 scaling), ended where the force, resp. the overlap, returns to zero.
    expect(referenceRestitution(hertzForce(forceZero), hertzForce(forceZero), hertzStart(forceZero, t0), t0)).toBeCloseTo(e, 5);
    expect(referenceRestitution(hertzForce(overlapZero), (x) => x, hertzStart(overlapZero, t0), t0)).toBeCloseTo(e, 5);
    // Antypov & Elliott 2011, EPL 94, 50004 (from memory; the same relation is in the LIGGGHTS hertz
    // model's damping, γ_n = 2√(5/6)·|β_L|·√(S_n·m*), S_n = 2E*√(R*δ)): without a clamp the Tsuji-damped
    // Hertz contact has the linear spring–dashpot's restitution with β = √5 · ζ_Luding(e).
    expect(Math.abs(overlapZero / (Math.sqrt(5) * linearDampingRatioOverlapCriterion(e)) - 1)).toBeLessThan(1e-5);
  });

  it("the envelope export lists every contact model and restitution the sweep uses, and nothing for undamped contacts", () => {
    const modelAxis: ExpandedAxis = { parameter: "contact.model", label: "contact model", unit: "", values: ["linear", "hertz"] };
    const restitutionAxis: ExpandedAxis = { parameter: "contact.damping.restitution", label: "restitution", unit: "", values: [0.5, 0.8] };
    const swept = envelopeDamping({ scenario: { contact: { model: "linear", stiffness: 1e4, damping: { kind: "restitution", value: 0.9 } } }, axes: [] }, [modelAxis, restitutionAxis]);
    expect(swept.kind).toBe("restitution");
    if (swept.kind !== "restitution") return;
    expect(swept.values.map((entry) => [entry.model, entry.restitution, Object.keys(entry.forceZero)[0]])).toEqual([
      ["linear", 0.8, "dampingRatio"],
      ["linear", 0.5, "dampingRatio"],
      ["hertz", 0.8, "beta"],
      ["hertz", 0.5, "beta"],
    ]);
    expect(envelopeDamping({ scenario: { contact: { model: "hertz", stiffness: 1e8, damping: { kind: "none" } } }, axes: [] }, [])).toEqual({ kind: "none" });
    // Per-pair restitutions (scene.pair axis) are listed too.
    const pairs = envelopeDamping({ scenario: { contact: { model: "linear", stiffness: 1e4, damping: { kind: "restitution", value: 0.9 } } }, axes: [{ parameter: "scene.pair", pairs: [{ restitution: 0.6 }, { restitution: 0.9 }] }] }, []);
    expect(pairs.kind === "restitution" && pairs.values.map((entry) => entry.restitution)).toEqual([0.9, 0.6]);
  });
});
