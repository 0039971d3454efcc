/**
 * The engine against the plain C reference peer (tests/bench/peers/contact-peer.c): 200 steps of
 * the box scene, same initial state, same contact law and integrator order of operations. The C
 * peer is an independent implementation of the same arithmetic, built with `cc -O2
 * -ffp-contract=off`; the benchmark compares speeds only because the two do the same work, which
 * this test establishes. Skipped, with the reason printed, where no C compiler is installed.
 */
import { describe, expect, it } from "vitest";
import { simulate } from "@/lib/physics";
import type { Scenario } from "@/lib/physics/types";
import { buildPeer, runBoxPeer, runPairPeer } from "../../bench/peers/c-peer";
import { pairGridScenario, settledHopper, settledHopperScenario } from "../../bench/contact-scenes";

const STEPS = 200;
const peer = buildPeer();
if (!peer.ok) console.warn(`C peer tests skipped: ${peer.why}`);

/** A crowded tray of an invented marble game, "Glassrun": 400 marbles at half area fraction, thrown at up to 2 m/s under gravity. */
function crowdedTray(): Scenario {
  const count = 400;
  const radiusM = 0.01;
  const sideM = Math.sqrt((count * Math.PI * radiusM * radiusM) / 0.5);
  return {
    scene: { kind: "box", count, massKg: 0.01, radiusM, widthM: sideM, heightM: sideM, maxSpeedMPerS: 2, gravityMPerS2: 9.81 },
    contact: { model: "linear", stiffness: 8e4, damping: { kind: "restitution", value: 0.5 } },
    integrator: "symplectic-euler",
    dtS: 1e-4,
    substeps: 1,
    durationS: STEPS * 1e-4,
    tolerances: { energyDriftRel: 0.01, maxOverlapFraction: 0.5, blowUpEnergyFactor: 1e6 },
    verdictRules: 2,
    seed: 7,
  };
}

/** Final positions and momenta of an engine run (plain stepping) and of the C peer from the same state. */
function compare(scenario: Scenario) {
  if (!peer.ok) throw new Error(peer.why);
  const result = simulate(scenario, { stepping: "plain", maxSamples: 2 });
  const series = result.series!;
  const c = runBoxPeer(peer.binary, scenario, result.metrics.steps, 1).state;
  let maxDifferenceM = 0;
  let maxDifferenceNs = 0;
  let identical = 0;
  let movedM = 0;
  const mass = scenario.scene.kind === "box" ? scenario.scene.massKg : scenario.scene.kind === "snapshot" ? scenario.scene.bodies[0].massKg : NaN;
  series.bodies.forEach((track, i) => {
    const [x, y, vx, vy] = [c[4 * i], c[4 * i + 1], c[4 * i + 2], c[4 * i + 3]];
    const engine = [track.xM[1], track.yM[1], track.pxNs[1], track.pyNs[1]];
    const peerValues = [x, y, mass * vx, mass * vy];
    maxDifferenceM = Math.max(maxDifferenceM, Math.abs(engine[0] - peerValues[0]), Math.abs(engine[1] - peerValues[1]));
    maxDifferenceNs = Math.max(maxDifferenceNs, Math.abs(engine[2] - peerValues[2]), Math.abs(engine[3] - peerValues[3]));
    if (engine.every((value, k) => Object.is(value, peerValues[k]))) identical++;
    movedM = Math.max(movedM, Math.hypot(track.xM[1] - track.xM[0], track.yM[1] - track.yM[0]));
  });
  return { result, maxDifferenceM, maxDifferenceNs, identical, movedM, count: series.bodies.length };
}

describe.skipIf(!peer.ok)("engine against the C reference peer", () => {
  it("a crowded box under gravity: 200 steps of colliding marbles end where the C peer's do, to rounding", () => {
    const scenario = crowdedTray();
    const { result, maxDifferenceM, maxDifferenceNs, identical, movedM, count } = compare(scenario);
    // The run has contacts and motion to compare (else agreement would say nothing).
    expect(result.metrics.steps).toBe(STEPS);
    expect(result.metrics.contactSteps).toBeGreaterThan(STEPS / 2);
    expect(movedM).toBeGreaterThan(0.01);
    // Same operations in the same order (IEEE 754 double, no fused multiply-add): the same bits.
    // The tolerance (1e-12 m, 1e-12 N·s) only allows for a last-bit difference grown over the run.
    expect(maxDifferenceM).toBeLessThanOrEqual(1e-12);
    expect(maxDifferenceNs).toBeLessThanOrEqual(1e-12);
    expect(identical).toBe(count);
  });

  it("a settled pile (the benchmark's coin hopper, 300 coins): 200 steps in resting contact agree with the C peer", () => {
    const scenario = settledHopperScenario(settledHopper(300, 0.2), STEPS);
    const { result, maxDifferenceM, maxDifferenceNs, identical, count } = compare(scenario);
    expect(result.metrics.contactSteps).toBe(STEPS);
    expect(maxDifferenceM).toBeLessThanOrEqual(1e-12);
    expect(maxDifferenceNs).toBeLessThanOrEqual(1e-12);
    expect(identical).toBe(count);
  });

  it("the pair kernel: soft and stiff contacts stepped every step end where the C peer's do", () => {
    if (!peer.ok) throw new Error(peer.why);
    const scenarios = [pairGridScenario(10, 1e-3), pairGridScenario(1e3, 1e-4), pairGridScenario(1e5, 1e-4)];
    const results = scenarios.map((scenario) => simulate(scenario, { stepping: "plain", maxSamples: 2 }));
    const c = runPairPeer(peer.binary, scenarios, results.map((result) => result.metrics.steps), 1).state;
    results.forEach((result, cell) => {
      expect(result.metrics.contactSteps).toBeGreaterThan(0);
      const series = result.series!;
      for (let b = 0; b < 2; b++) {
        expect(series.bodies[b].xM[1]).toBe(c[cell * 8 + 4 * b]);
        expect(series.bodies[b].yM[1]).toBe(c[cell * 8 + 4 * b + 1]);
        expect(series.bodies[b].pxNs[1]).toBe(0.05 * c[cell * 8 + 4 * b + 2]);
      }
    });
  });
});
