/**
 * Friction, spin and resting contact (lib/physics/tangential.ts): the engine against closed-form
 * mechanics and an independent ODE solution. Invented props: "Puckworks" studio's crates, pucks
 * and loot coins.
 */
import { describe, expect, it } from "vitest";
import {
  grossSlidingRebound,
  rollingAccelerationMPerS2,
  simulate,
  slideToRoll,
  slidingAccelerationMPerS2,
  slidingAngleDeg,
  tangentialEffectiveMassKg,
  tangentialOmegaH,
  type ContactSpec,
  type IntegratorName,
  type RunResult,
  type Scenario,
  type SnapshotScene,
} from "@/lib/physics";
import { logLogSlope, scenario, solveODE } from "./fixtures";

const G = 9.81;
const MASS = 1;
const RADIUS = 0.05;

function frictionContact(stiffness: number, coefficient: number, extra: Partial<NonNullable<ContactSpec["friction"]>> = {}, damping: ContactSpec["damping"] = { kind: "none" }): ContactSpec {
  return { model: "linear", stiffness, damping, friction: { coefficient, stiffnessRatio: 2 / 7, ...extra } };
}

/** One disc resting on an incline through the origin rising to the right at `angleDeg` (free space above), 1 m up the slope. */
function inclineScene(angleDeg: number, speedDownMPerS = 0): SnapshotScene {
  const angle = (angleDeg * Math.PI) / 180;
  const normalX = -Math.sin(angle);
  const normalY = Math.cos(angle);
  const alongX = Math.cos(angle);
  const alongY = Math.sin(angle);
  return {
    kind: "snapshot",
    bodies: [{ xM: RADIUS * normalX + alongX, yM: RADIUS * normalY + alongY, vxMPerS: -speedDownMPerS * alongX, vyMPerS: -speedDownMPerS * alongY, massKg: MASS, radiusM: RADIUS }],
    walls: [{ normalX, normalY, offsetM: 0 }],
    gravityMPerS2: G,
    speedScale: 1,
  };
}

/** Speed down the slope and spin of body 0 at sample `index` of a run's series. */
function downSlope(result: RunResult, angleDeg: number, index: number): { speed: number; spin: number; t: number } {
  const series = result.series!;
  const angle = (angleDeg * Math.PI) / 180;
  const body = series.bodies[0];
  const speed = -(body.pxNs[index] * Math.cos(angle) + body.pyNs[index] * Math.sin(angle)) / MASS;
  return { speed, spin: body.omegaRadPerS![index], t: series.tS[index] };
}

describe("a disc on an incline", () => {
  const stiffness = 1e6; // ω_n·h = 0.1 at h = 1e-4
  const h = 1e-4;
  const run = (angleDeg: number, coefficient: number) =>
    simulate(scenario(inclineScene(angleDeg), frictionContact(stiffness, coefficient, { dampingRatio: 0.3 }, { kind: "restitution", value: 0.3 }), "velocity-verlet", h, 0.5), { maxSamples: 501 });

  it("rolls without slipping below the sliding angle at g·sin θ/(1 + κ)", () => {
    // tan 20° = 0.364 < 3μ = 1.5: rolls (Kleppner & Kolenkow, An Introduction to Mechanics, 2nd ed. 2014, ch. 7).
    const result = run(20, 0.5);
    const early = downSlope(result, 20, 100);
    const late = downSlope(result, 20, 500);
    const acceleration = (late.speed - early.speed) / (late.t - early.t);
    expect(acceleration).toBeCloseTo(rollingAccelerationMPerS2(20, G), 2); // 2.237 m/s², Kleppner & Kolenkow 2014 ch. 7
    // Rolling: the rim speed equals the centre speed (clockwise spin rolls it down to the left: ω·r = +v).
    expect(late.spin * RADIUS).toBeCloseTo(late.speed, 3);
    expect(result.series!.slidingContacts!.slice(100).every((n) => n === 0)).toBe(true);
  });

  it("slides above the sliding angle: the centre at g(sin θ − μ cos θ), the spin at 2μg·cos θ/r", () => {
    // tan 30° = 0.577 > 3μ = 0.3: slips throughout.
    const result = run(30, 0.1);
    const early = downSlope(result, 30, 100);
    const late = downSlope(result, 30, 500);
    const acceleration = (late.speed - early.speed) / (late.t - early.t);
    expect(acceleration).toBeCloseTo(slidingAccelerationMPerS2(30, G, 0.1), 2); // 4.055 m/s², Kleppner & Kolenkow 2014 ch. 2
    // Friction μ·m·g·cos θ at lever r on I = ½mr²: α·r = 2μg·cos θ (Kleppner & Kolenkow 2014 ch. 7).
    const spinUp = ((late.spin - early.spin) * RADIUS) / (late.t - early.t);
    expect(spinUp).toBeCloseTo(2 * 0.1 * G * Math.cos(Math.PI / 6), 2);
    expect(result.series!.slidingContacts!.slice(100).every((n) => n === 1)).toBe(true);
  });

  it("starts to slip between just below and just above the sliding angle atan(3μ)", () => {
    const threshold = slidingAngleDeg(0.2, 0.5); // atan(0.6) = 30.96°, Kleppner & Kolenkow 2014 ch. 7
    expect(threshold).toBeCloseTo(30.964, 3);
    const below = run(threshold - 2, 0.2);
    const above = run(threshold + 2, 0.2);
    expect(below.series!.slidingContacts!.slice(100).every((n) => n === 0)).toBe(true);
    expect(above.series!.slidingContacts!.slice(100).every((n) => n === 1)).toBe(true);
  });
});

describe("a sliding disc that starts rolling", () => {
  it("rolls on at 2v0/3 after v0/(3μg), as the closed form says", () => {
    const floor: SnapshotScene = {
      kind: "snapshot",
      bodies: [{ xM: 0, yM: RADIUS, vxMPerS: 2, vyMPerS: 0, massKg: MASS, radiusM: RADIUS }],
      walls: [{ normalX: 0, normalY: 1, offsetM: 0 }],
      gravityMPerS2: G,
      speedScale: 1,
    };
    const h = 1e-4;
    const result = simulate(scenario(floor, frictionContact(1e6, 0.3, { dampingRatio: 0.3 }, { kind: "restitution", value: 0.3 }), "velocity-verlet", h, 0.5), { maxSamples: 5001 });
    const expected = slideToRoll(2, 0, 0.3, G); // v* = 1.3333 m/s, t* = 0.2265 s (Kleppner & Kolenkow 2014, ch. 7)
    expect(expected.rollingSpeedMPerS).toBeCloseTo(4 / 3, 12);
    const series = result.series!;
    const last = series.tS.length - 1;
    expect(series.bodies[0].pxNs[last] / MASS).toBeCloseTo(expected.rollingSpeedMPerS, 3);
    // Rolling to the right is clockwise: ω·r = −v.
    expect(-series.bodies[0].omegaRadPerS![last] * RADIUS).toBeCloseTo(expected.rollingSpeedMPerS, 3);
    const firstStick = series.slidingContacts!.findIndex((n, i) => i > 10 && n === 0);
    expect(Math.abs(series.tS[firstStick] - expected.timeS)).toBeLessThan(0.002); // within 1 % of t*
  });
});

describe("oblique impact on a wall in gross sliding", () => {
  const wallRun = (normalSpeed: number, tangentialSpeed: number, spin: number, coefficient: number, integrator: IntegratorName = "velocity-verlet") => {
    const speed = Math.hypot(normalSpeed, tangentialSpeed);
    const angleDeg = (Math.atan2(tangentialSpeed, normalSpeed) * 180) / Math.PI;
    return simulate(
      scenario({ kind: "wall", massKg: MASS, radiusM: RADIUS, speedMPerS: speed, angleDeg, gapM: 0.001, spinRadPerS: spin }, frictionContact(1e6, coefficient, { stiffnessRatio: 1 }), integrator, 1e-5, 0.01),
    );
  };

  it("leaves with v_t − μ(1 + e)v_n and spin μ(1 + e)v_n/(κr) (Coulomb's law over the impulse)", () => {
    const result = wallRun(1, Math.sqrt(3), 0, 0.1);
    const expected = grossSlidingRebound(1, Math.sqrt(3), 0, 0.1, 1); // v_t' = 1.532 m/s, ω·r = 0.4 m/s
    expect(expected.grossSliding).toBe(true);
    const metrics = result.metrics;
    expect(metrics.effectiveRestitution).toBeCloseTo(1, 3);
    const reboundTangential = Math.sin((metrics.reboundAngleDeg! * Math.PI) / 180) * Math.hypot(1, expected.tangentialSpeedMPerS);
    // Within 2 %: the Cundall–Strack spring sticks for the first steps of the contact, until its
    // force reaches μ·F_n, so slightly less than the full Coulomb impulse is transferred.
    expect(Math.abs(reboundTangential - expected.tangentialSpeedMPerS)).toBeLessThan(0.02 * expected.tangentialSpeedMPerS);
    expect(Math.abs(metrics.reboundSpinRadPerS! * RADIUS - expected.spinTimesRadiusMPerS)).toBeLessThan(0.02 * expected.spinTimesRadiusMPerS);
  });

  // Chung & Ooi 2011 (Granular Matter 13, "Benchmark tests for verifying discrete element modelling
  // codes at particle impact level"), tests 4 and 6 set up for a disc: constant normal speed, the
  // tangential speed (test 4) or the initial spin (test 6) varied. In the gross-sliding range the
  // rebound follows the rigid-body Coulomb line (Maw, Barber & Fawcett 1976, Wear 38), which is what
  // the paper's reference curves show there; its plots, read by eye, allow a few per cent.
  it.each([
    [0.8, 0],
    [1.2, 0],
    [2, 0],
    [3, 0],
    [0.5, -20],
    [0.5, 40],
  ])("test 4/6 analogue: v_t = %s m/s, ω0 = %s rad/s follows the gross-sliding line within 2 %%", (tangentialSpeed, spin) => {
    const expected = grossSlidingRebound(1, tangentialSpeed, spin * RADIUS, 0.1, 1);
    expect(expected.grossSliding).toBe(true);
    const metrics = wallRun(1, tangentialSpeed, spin, 0.1).metrics;
    const normalOut = Math.cos((metrics.reboundAngleDeg! * Math.PI) / 180);
    const tangentialOut = Math.tan((metrics.reboundAngleDeg! * Math.PI) / 180) * (metrics.effectiveRestitution ?? 1);
    expect(normalOut).toBeGreaterThan(0);
    expect(Math.abs(tangentialOut - expected.tangentialSpeedMPerS)).toBeLessThan(0.02 * Math.max(1, Math.abs(expected.tangentialSpeedMPerS)));
    expect(Math.abs(metrics.reboundSpinRadPerS! * RADIUS - expected.spinTimesRadiusMPerS)).toBeLessThan(0.02 * Math.max(1, Math.abs(expected.spinTimesRadiusMPerS)));
  });
});

describe("oblique impact on a wall in the sticking regime", () => {
  // Chung & Ooi 2011's tests 4 and 6 have a sticking range at small tangential-to-normal speed
  // ratios, where the tangential spring, not Coulomb's limit, decides the rebound. For a disc the
  // contact point's tangential motion has the effective mass m_t = m/(1 + m·r²/I) = m/3, so with
  // k_t/k = 1/3 the tangential oscillator has the normal one's frequency, ω_t = ω_n. Undamped, the
  // normal spring pushes for half a period, F_n = m·v_n·ω·sin ωt, and the sticking tangential spring
  // turns the same half period, F_t = m_t·u·ω·sin ωt: their ratio stays u/(3·v_n), so below μ the
  // contact sticks throughout and the contact point leaves with its tangential speed reversed
  // (simple harmonic motion: Kleppner & Kolenkow 2014, "An Introduction to Mechanics", ch. 3). The
  // impulse m_t·2u then gives v_t' = u/3 and ω'·r = 4u/3 (Newton's second law for translation and
  // rotation, ibid. ch. 7). The engine's lever arm against a wall is the distance to the contact
  // point, shorter than r by the overlap (lib/physics/tangential.ts), so the closed form holds to
  // O(δ/r): a stiff spring keeps the largest overlap at v_n/ω_n = 0.1 mm, 0.2 % of r (at 1 MN/m the
  // rebound sits 1.4 % off u/3 at every step size, which is that lever arm, not the integrator).
  const stickingRun = (tangentialSpeed: number, integrator: IntegratorName) =>
    simulate(
      scenario(
        { kind: "wall", massKg: MASS, radiusM: RADIUS, speedMPerS: Math.hypot(1, tangentialSpeed), angleDeg: (Math.atan2(tangentialSpeed, 1) * 180) / Math.PI, gapM: 0.001, spinRadPerS: 0 },
        frictionContact(1e8, 0.5, { stiffnessRatio: 1 / 3 }),
        integrator,
        1e-6,
        0.002,
      ),
    );

  it.each([
    [0.3, "velocity-verlet"],
    [0.6, "velocity-verlet"],
    [0.6, "symplectic-euler"],
  ] as const)("u = %s m/s (%s): sticks throughout and leaves with v_t' = u/3 and ω'·r = 4u/3 within 0.5 %% of u", (tangentialSpeed, integrator) => {
    expect(tangentialSpeed / 3).toBeLessThan(0.5); // F_t/F_n = u/(3·v_n) stays below μ
    const metrics = stickingRun(tangentialSpeed, integrator).metrics;
    // Sticking throughout, bar the last step or two, where F_n of a step that ends the contact is
    // tiny and the discrete phases of the two springs differ by a fraction of a step.
    expect(metrics.contactSteps).toBeGreaterThan(300); // π/ω_n = 0.314 ms at 1 µs steps
    expect(metrics.slidingSteps).toBeLessThanOrEqual(3);
    expect(metrics.effectiveRestitution).toBeCloseTo(1, 3);
    const tangentialOut = Math.tan((metrics.reboundAngleDeg! * Math.PI) / 180) * metrics.effectiveRestitution!;
    expect(Math.abs(tangentialOut - tangentialSpeed / 3)).toBeLessThan(0.005 * tangentialSpeed);
    expect(Math.abs(Math.abs(metrics.reboundSpinRadPerS! * RADIUS) - (4 * tangentialSpeed) / 3)).toBeLessThan(0.005 * tangentialSpeed);
  });

  it("past the sticking range (u/(3·v_n) > μ) the same contact slides and the gross-sliding line takes over", () => {
    const metrics = stickingRun(3, "velocity-verlet").metrics;
    expect(metrics.slidingSteps).toBeGreaterThan(100);
    const expected = grossSlidingRebound(1, 3, 0, 0.5, 1);
    expect(expected.grossSliding).toBe(true);
    const tangentialOut = Math.tan((metrics.reboundAngleDeg! * Math.PI) / 180) * metrics.effectiveRestitution!;
    expect(Math.abs(tangentialOut - expected.tangentialSpeedMPerS)).toBeLessThan(0.02 * expected.tangentialSpeedMPerS);
  });
});

describe("tangential stability bound", () => {
  // A coin resting on the floor, nudged sideways, friction too high to slide: only the sticking
  // tangential spring oscillates, at ω_t = √(k_t/m_t) with m_t = m/(1 + m·r²/I) = m/3.
  const resting = (omegaNH: number, integrator: IntegratorName) => {
    const k = 1e6;
    const h = omegaNH / Math.sqrt(k / MASS);
    const floor: SnapshotScene = {
      kind: "snapshot",
      bodies: [{ xM: 0, yM: RADIUS - (MASS * G) / k, vxMPerS: 0.001, vyMPerS: 0, massKg: MASS, radiusM: RADIUS }],
      walls: [{ normalX: 0, normalY: 1, offsetM: 0 }],
      gravityMPerS2: G,
      speedScale: 1,
    };
    return { h, k, result: simulate(scenario(floor, frictionContact(k, 1000, { stiffnessRatio: 1 }), integrator, h, 2000 * h)) };
  };

  it("the run reports ω_t·h as √(3k_t/m)·h (Hairer, Lubich & Wanner 2006: unstable at ω·h ≥ 2)", () => {
    const { h, k, result } = resting(1.0, "symplectic-euler");
    const expected = tangentialOmegaH(k, tangentialEffectiveMassKg(MASS), h); // √3 ≈ 1.732
    expect(expected).toBeCloseTo(Math.sqrt(3), 12);
    expect(result.metrics.maxTangentialOmegaH!).toBeCloseTo(expected, 3);
  });

  it.each(["symplectic-euler", "velocity-verlet"] as const)("%s: stays at rest below the bound and blows up above it", (integrator) => {
    // Normal ω_n·h 1.1 and 1.25 are both stable; the tangential ω_t·h = √3·ω_n·h is 1.91 and 2.17.
    const below = resting(1.1, integrator).result;
    const above = resting(1.25, integrator).result;
    expect(below.metrics.maxTangentialOmegaH!).toBeLessThan(2);
    expect(above.metrics.maxTangentialOmegaH!).toBeGreaterThan(2);
    expect(below.metrics.exploded).toBe(false);
    expect(below.metrics.slidingSteps).toBe(0);
    // Above the bound the tangential oscillation grows until the contact slides or the run blows up.
    expect(above.metrics.exploded || (above.metrics.slidingSteps ?? 0) > 0).toBe(true);
  });
});

/** Twelve spinning loot coins in open space (no walls, no gravity), thrown together so that many collide. */
function coinCloud(): SnapshotScene {
  const bodies: SnapshotScene["bodies"] = [];
  for (let i = 0; i < 12; i++) {
    const column = i % 4;
    const row = (i - column) / 4;
    bodies.push({ xM: 0.3 + 0.11 * column, yM: -0.2 + 0.11 * row + 0.01 * column, vxMPerS: -0.5 * (column - 1.5) + 0.1 * row, vyMPerS: -0.4 * (row - 1) + 0.05 * column, massKg: 0.5 + 0.1 * i, radiusM: 0.05, omegaRadPerS: 10 - 2 * i });
  }
  return { kind: "snapshot", bodies, walls: [], gravityMPerS2: 0, speedScale: 1 };
}

describe("conservation and determinism with friction on", () => {
  it.each(["symplectic-euler", "velocity-verlet"] as const)("%s conserves angular momentum (orbit + spin) to rounding where no wall or gravity acts", (integrator) => {
    const result = simulate(scenario(coinCloud(), frictionContact(1e4, 0.4, { dampingRatio: 0.2 }, { kind: "restitution", value: 0.6 }), integrator, 1e-4, 1));
    expect(result.metrics.contactSteps).toBeGreaterThan(100);
    expect(result.metrics.slidingSteps).toBeGreaterThan(0);
    // Rounding only: 10⁴ steps of a dozen bodies at ~1e-16 each.
    expect(Math.abs(result.metrics.angularMomentumDriftRel!)).toBeLessThan(1e-10);
    expect(Math.abs(result.metrics.momentumDriftRelX)).toBeLessThan(1e-10);
  });

  it("with walls and gravity the drift is net of their torques (a box of crates with friction)", () => {
    const box: Scenario = scenario(
      { kind: "box", count: 40, massKg: 1, radiusM: 0.05, widthM: 1, heightM: 1, maxSpeedMPerS: 2, gravityMPerS2: G },
      frictionContact(1e5, 0.5, { dampingRatio: 0.2 }, { kind: "restitution", value: 0.5 }),
      "velocity-verlet",
      1e-4,
      0.5,
    );
    const result = simulate(box);
    expect(Math.abs(result.metrics.angularMomentumDriftRel!)).toBeLessThan(1e-9);
  });

  it("is byte-identical whichever broad phase finds the pairs and whatever ran before in the same thread", () => {
    const box: Scenario = scenario(
      { kind: "box", count: 60, massKg: 1, radiusM: 0.04, widthM: 1, heightM: 1, maxSpeedMPerS: 2, gravityMPerS2: G },
      frictionContact(1e5, 0.5, { dampingRatio: 0.2, staticCoefficient: 0.7 }, { kind: "restitution", value: 0.5 }),
      "symplectic-euler",
      1e-4,
      0.3,
      { verdictRules: 2 },
    );
    // Everything but the work counts (which name the broad phase).
    const outcome = (result: RunResult) => JSON.stringify([result.metrics, result.verdict, result.reason, result.series]);
    const grid = outcome(simulate(box, { broadPhase: "grid", maxSamples: 20 }));
    const allPairs = outcome(simulate(box, { broadPhase: "all-pairs", maxSamples: 20 }));
    simulate(scenario(coinCloud(), frictionContact(1e4, 0.4), "velocity-verlet", 1e-4, 0.2));
    const again = outcome(simulate(box, { broadPhase: "grid", maxSamples: 20 }));
    expect(JSON.parse(grid)[0].slidingSteps).toBeGreaterThan(100);
    expect(allPairs).toBe(grid);
    expect(again).toBe(grid);
  });

  it("friction coefficient 0 without rolling resistance runs exactly the frictionless engine", () => {
    const base = scenario(coinCloud(), { model: "linear", stiffness: 1e4, damping: { kind: "restitution", value: 0.6 } }, "velocity-verlet", 1e-4, 0.3);
    const zero = { ...base, contact: { ...base.contact, friction: { coefficient: 0 } } };
    const plain = simulate(base);
    expect(JSON.stringify(simulate(zero))).toBe(JSON.stringify(plain));
    expect(plain.metrics.angularMomentumDriftRel).toBeUndefined();
  });
});

describe("independent check: one sticking oblique contact against mathjs' RK45", () => {
  // Disc against the wall x = 0: normal spring k·δ, tangential Cundall–Strack spring −k_t·ξ with
  // ξ̇ = v_y − ω·x (lever: the centre's distance to the wall), friction too high to slide.
  const k = 1e5;
  const kt = (2 / 7) * k;
  const inertia = 0.5 * MASS * RADIUS * RADIUS;
  const endS = 0.005; // inside the contact (it lasts π/√(k/m) ≈ 9.9 ms)
  const reference = (() => {
    const derivative = (_t: number, s: number[]) => {
      const [x, vx, , vy, , omega, xi] = s;
      const normal = k * (RADIUS - x);
      const tangential = -kt * xi;
      return [vx, normal / MASS, vy, tangential / MASS, omega, (-x * tangential) / inertia, vy - omega * x];
    };
    const solution = solveODE(derivative, [0, endS], [RADIUS, -1, 0, 0.5, 0, 0, 0], { method: "RK45", tol: 1e-13, maxStep: 1e-5, maxIter: 1e6 });
    return solution.y[solution.y.length - 1];
  })();

  it.each([
    ["symplectic-euler", 1],
    ["velocity-verlet", 2],
  ] as const)("%s converges at order %i in position, velocity and spin", (integrator, order) => {
    const steps = [50, 100, 200, 400];
    const errors = steps.map((n) => {
      const result = simulate(
        scenario({ kind: "wall", massKg: MASS, radiusM: RADIUS, speedMPerS: Math.hypot(1, 0.5), angleDeg: (Math.atan2(0.5, 1) * 180) / Math.PI, gapM: 0 }, { model: "linear", stiffness: k, damping: { kind: "none" }, friction: { coefficient: 1e6, stiffnessRatio: 2 / 7 } }, integrator, endS / n, endS),
        { maxSamples: 2 },
      );
      const body = result.series!.bodies[0];
      const vy = body.pyNs[1] / MASS;
      const omega = body.omegaRadPerS![1];
      const x = body.xM[1];
      return Math.abs(vy - reference[3]) + Math.abs((omega - reference[5]) * RADIUS) + Math.abs((x - reference[0]) * Math.sqrt(k / MASS));
    });
    const slope = logLogSlope(steps.map((n) => endS / n), errors);
    expect(slope).toBeGreaterThan(order - 0.2);
    expect(slope).toBeLessThan(order + 0.3);
  });
});
