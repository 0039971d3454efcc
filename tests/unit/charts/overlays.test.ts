import { describe, expect, it } from "vitest";
import {
  clipSegment,
  contactOmegaRadPerS,
  dtForStepsPerContactS,
  effectiveMassKg,
  linearContactDurationS,
  overlayFromFunction,
  overlayToPixelPaths,
  stabilityBoundOverlays,
  stabilityLimitDtS,
  stabilityLimitStiffnessNPerM,
  stepsPerContactOverlays,
  tunnellingDtS,
  tunnellingOverlay,
} from "@/lib/charts/overlays";
import { mapGeometry } from "@/lib/charts/scales";

/** Velocity Verlet on x'' = −ω²x; returns max |x| over the run (an independent check of the bound). */
function verletAmplitude(omega: number, dt: number, steps: number): number {
  let x = 1;
  let v = 0;
  let a = -omega * omega * x;
  let peak = 1;
  for (let i = 0; i < steps; i++) {
    v += 0.5 * dt * a;
    x += dt * v;
    a = -omega * omega * x;
    v += 0.5 * dt * a;
    peak = Math.max(peak, Math.abs(x));
  }
  return peak;
}

describe("stability bound ω·dt = 2", () => {
  it("puts every curve point on the bound", () => {
    // Hairer, Lubich & Wanner, Geometric Numerical Integration, 2006: Störmer–Verlet on the harmonic
    // oscillator is stable for |h·ω| < 2.
    const [bound] = stabilityBoundOverlays({ effectiveMassKg: 0.25, xRange: [1e2, 1e8], xSpacing: "log" });
    expect(bound.points.length).toBeGreaterThan(10);
    for (const { x: stiffness, y: dt } of bound.points) {
      expect(Math.sqrt(stiffness / 0.25) * dt).toBeCloseTo(2, 12);
    }
  });

  it("separates bounded from growing Verlet runs", () => {
    // Independent check by simulation (velocity Verlet written out in this test): just inside the
    // bound the amplitude stays O(1), just outside it grows without limit.
    const stiffness = 4e4;
    const mass = 0.1;
    const omega = contactOmegaRadPerS(stiffness, mass);
    const dtLimit = stabilityLimitDtS(stiffness, mass);
    expect(verletAmplitude(omega, 0.99 * dtLimit, 2000)).toBeLessThan(10);
    expect(verletAmplitude(omega, 1.01 * dtLimit, 2000)).toBeGreaterThan(1e6);
  });

  it("draws the safety-margin line below the bound", () => {
    // ω·dt = 2(1 − margin): a 20 % margin gives ω·dt = 1.6 (definition of the margin in lib/charts/overlays.ts).
    const overlays = stabilityBoundOverlays({ effectiveMassKg: 1, xRange: [1e3, 1e6], xSpacing: "log", marginFraction: 0.2 });
    expect(overlays).toHaveLength(2);
    expect(overlays[1].label).toContain("20 % margin");
    for (const { x, y } of overlays[1].points) expect(Math.sqrt(x) * y).toBeCloseTo(1.6, 12);
  });

  it("gives the same curve with the axes swapped", () => {
    // Inverse of dt = 2/√(k/m): k = m(2/dt)² (algebra of the same bound).
    for (const k of [1e2, 3.3e4, 1e7]) {
      expect(stabilityLimitStiffnessNPerM(stabilityLimitDtS(k, 0.4), 0.4) / k).toBeCloseTo(1, 12);
    }
    const [swapped] = stabilityBoundOverlays({ effectiveMassKg: 0.4, xRange: [1e-5, 1e-2], xSpacing: "log", axes: "timestep-x" });
    for (const { x: dt, y: k } of swapped.points) expect(Math.sqrt(k / 0.4) * dt).toBeCloseTo(2, 12);
  });

  it("uses the reduced mass of a pair", () => {
    // Reduced mass m_A m_B/(m_A + m_B) (any mechanics textbook; from memory): 1 kg with 3 kg → 0.75 kg.
    expect(effectiveMassKg(1, 3)).toBeCloseTo(0.75, 15);
    expect(effectiveMassKg(2)).toBe(2);
    expect(() => effectiveMassKg(0)).toThrow(/massAKg must be a positive/);
    expect(() => stabilityLimitDtS(1e4, 1, 1)).toThrow(/marginFraction/);
  });
});

describe("steps per contact", () => {
  it("follows t_c = π/ω", () => {
    // Luding, Eur. J. Environ. Civ. Eng. 12 (2008): undamped linear contact lasts t_c = π/ω.
    // Hand derivation: k = 1e5 N/m, m = 1 kg → ω = 316.228 rad/s, t_c = 9.9346 ms.
    expect(linearContactDurationS(1e5, 1)).toBeCloseTo(9.9346e-3, 6);
    expect(dtForStepsPerContactS(1e5, 1, 10)).toBeCloseTo(9.9346e-4, 7);
    const overlays = stepsPerContactOverlays({ effectiveMassKg: 0.5, xRange: [1e3, 1e7], xSpacing: "log" });
    expect(overlays.map((o) => o.label)).toEqual(["5 steps per contact", "10 steps per contact", "20 steps per contact"]);
    const n = [5, 10, 20];
    overlays.forEach((overlay, i) => {
      for (const { x: k, y: dt } of overlay.points) expect(linearContactDurationS(k, 0.5) / dt).toBeCloseTo(n[i], 10);
    });
  });

  it("matches a simulated contact", () => {
    // Independent check by simulation: a disc of 1 kg meets a linear spring wall (k = 1e5 N/m) at 1 m/s;
    // the time spent in contact, integrated finely with velocity Verlet, is π/ω (Luding 2008).
    const k = 1e5;
    const m = 1;
    const dt = 1e-7;
    let x = 0;
    let v = -1;
    let t = 0;
    const force = (pos: number) => (pos < 0 ? -k * pos : 0);
    let a = force(x) / m;
    do {
      v += 0.5 * dt * a;
      x += dt * v;
      a = force(x) / m;
      v += 0.5 * dt * a;
      t += dt;
    } while (x < 0);
    expect(t / linearContactDurationS(k, m)).toBeCloseTo(1, 4);
  });

  it("swaps axes consistently", () => {
    const [swapped] = stepsPerContactOverlays({ effectiveMassKg: 2, xRange: [1e-5, 1e-2], xSpacing: "log", axes: "timestep-x", steps: [8] });
    for (const { x: dt, y: k } of swapped.points) expect(linearContactDurationS(k, 2) / dt).toBeCloseTo(8, 10);
  });
});

describe("tunnelling threshold", () => {
  it("puts v·dt equal to the contact thickness", () => {
    // Definition of the threshold (lib/charts/overlays.ts): one step covers the sum of radii.
    expect(tunnellingDtS(40, 0.02)).toBeCloseTo(5e-4, 15);
    const line = tunnellingOverlay({ thicknessM: 0.05, xRange: [1, 1000], xSpacing: "log" });
    for (const { x: v, y: dt } of line.points) expect(v * dt).toBeCloseTo(0.05, 14);
    const swapped = tunnellingOverlay({ thicknessM: 0.05, xRange: [1e-4, 1e-1], xSpacing: "log", axes: "timestep-x" });
    for (const { x: dt, y: v } of swapped.points) expect(v * dt).toBeCloseTo(0.05, 14);
  });
});

describe("clipping overlays to the plot", () => {
  const plot = { left: 40, top: 10, width: 200, height: 100 };

  it("clips a segment to the rectangle (Liang–Barsky)", () => {
    // Hand derivation: the horizontal line y = 60 from x = 0 to 300 enters at x = 40 and leaves at x = 240.
    expect(clipSegment(0, 60, 300, 60, plot)).toEqual([40, 60, 240, 60]);
    expect(clipSegment(0, 0, 30, 5, plot)).toBeNull();
    expect(clipSegment(50, 20, 60, 30, plot)).toEqual([50, 20, 60, 30]);
  });

  it("keeps the bound inside the plot and straight on log-log axes", () => {
    // On log k × log dt, dt = 2/√(k/m) is a straight line of slope −½ (log of the same formula).
    const geometry = mapGeometry(
      plot,
      { values: [1e3, 1e4, 1e5, 1e6], spacing: "log" },
      { values: [1e-4, 1e-3, 1e-2], spacing: "log" },
    );
    const [bound] = stabilityBoundOverlays({ effectiveMassKg: 1, xRange: [1e2, 1e8], xSpacing: "log", samples: 40 });
    const paths = overlayToPixelPaths(bound, geometry);
    expect(paths).toHaveLength(1);
    const path = paths[0];
    for (let i = 0; i < path.length; i += 2) {
      expect(path[i]).toBeGreaterThanOrEqual(plot.left - 1e-9);
      expect(path[i]).toBeLessThanOrEqual(plot.left + plot.width + 1e-9);
      expect(path[i + 1]).toBeGreaterThanOrEqual(plot.top - 1e-9);
      expect(path[i + 1]).toBeLessThanOrEqual(plot.top + plot.height + 1e-9);
    }
    // Pixels per decade: x 200/4, y 100/3 → slope in pixels (y down) = +½ · (100/3)/(200/4).
    const slope = (path[path.length - 1] - path[1]) / (path[path.length - 2] - path[0]);
    const expectedSlope = 0.5 * (100 / 3) / (200 / 4);
    expect(slope).toBeCloseTo(expectedSlope, 9);
    for (let i = 2; i < path.length - 2; i += 2) {
      expect((path[i + 1] - path[1]) / (path[i] - path[0])).toBeCloseTo(expectedSlope, 6);
    }
  });

  it("breaks the curve where it leaves and re-enters, or cannot be placed", () => {
    const geometry = mapGeometry(plot, { values: [0, 1, 2, 3, 4], spacing: "linear" }, { values: [0.1, 1, 10], spacing: "log" });
    // Hand derivation: y = 10·|x − 2| − 0.5 drops below the y axis's low edge (and to ≤ 0, which a log
    // axis cannot place) around x = 2, so the curve is drawn as two pieces.
    const overlay = overlayFromFunction("v", (x) => Math.abs(x - 2) * 10 - 0.5, [-0.5, 4.5], "linear", { samples: 101 });
    const paths = overlayToPixelPaths(overlay, geometry);
    expect(paths.length).toBe(2);
  });
});
