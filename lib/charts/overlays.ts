/**
 * Analytic overlays for stability maps, in axis units, and their clipping to the plot.
 *
 * - Stability bound of the explicit symplectic integrators (symplectic Euler, velocity Verlet)
 *   on an undamped linear contact spring: bounded while ω·dt < 2, ω = √(k / m_eff)
 *   (E. Hairer, C. Lubich, G. Wanner, Geometric Numerical Integration, 2nd ed., 2006,
 *   Störmer–Verlet applied to the harmonic oscillator, stability for |h·ω| < 2).
 * - Steps per contact: a linear undamped contact lasts t_c = π/ω (half a period; S. Luding,
 *   "Introduction to discrete element methods", Eur. J. Environ. Civ. Eng. 12, 2008), so
 *   N steps per contact means dt = t_c / N.
 * - Tunnelling threshold: a body moving v·dt per step can jump over a contact whose total
 *   thickness (sum of radii) is shorter than v·dt; the line is dt = (r_A + r_B) / v.
 */
import type { AxisSpacing, MapGeometry, PlotRect } from "./scales";
import { valueToPixel } from "./scales";

export interface OverlayPoint {
  x: number;
  y: number;
}

export type OverlayStroke = "solid" | "dashed" | "dotted";

/** A labelled curve in axis units (x, y as the map's axes). */
export interface Overlay {
  label: string;
  points: OverlayPoint[];
  stroke?: OverlayStroke;
}

/** Reduced mass of a pair: m_A·m_B / (m_A + m_B); a body against a fixed wall has m_eff = m. */
export function effectiveMassKg(massAKg: number, massBKg?: number): number {
  requirePositive("massAKg", massAKg);
  if (massBKg === undefined || massBKg === Number.POSITIVE_INFINITY) return massAKg;
  requirePositive("massBKg", massBKg);
  return (massAKg * massBKg) / (massAKg + massBKg);
}

function requirePositive(field: string, value: number): void {
  if (!(value > 0) || !Number.isFinite(value)) throw new Error(`${field} must be a positive finite number, got ${value}`);
}

/** Angular frequency ω = √(k / m_eff) of a linear contact spring. */
export function contactOmegaRadPerS(stiffnessNPerM: number, effectiveMass: number): number {
  requirePositive("stiffnessNPerM", stiffnessNPerM);
  requirePositive("effectiveMassKg", effectiveMass);
  return Math.sqrt(stiffnessNPerM / effectiveMass);
}

/** Largest stable timestep ω·dt = 2·(1 − margin); margin 0 is the bound itself. */
export function stabilityLimitDtS(stiffnessNPerM: number, effectiveMass: number, marginFraction = 0): number {
  if (!(marginFraction >= 0 && marginFraction < 1)) throw new Error(`marginFraction must be in [0, 1), got ${marginFraction}`);
  return (2 * (1 - marginFraction)) / contactOmegaRadPerS(stiffnessNPerM, effectiveMass);
}

/** Stiffness at which a timestep sits on the bound: k = m_eff·(2(1 − margin)/dt)². */
export function stabilityLimitStiffnessNPerM(dtS: number, effectiveMass: number, marginFraction = 0): number {
  requirePositive("dtS", dtS);
  requirePositive("effectiveMassKg", effectiveMass);
  const omega = (2 * (1 - marginFraction)) / dtS;
  return effectiveMass * omega * omega;
}

/** Duration of an undamped linear contact, t_c = π / ω. */
export function linearContactDurationS(stiffnessNPerM: number, effectiveMass: number): number {
  return Math.PI / contactOmegaRadPerS(stiffnessNPerM, effectiveMass);
}

/** Timestep giving `steps` integrator steps per linear contact: dt = t_c / N. */
export function dtForStepsPerContactS(stiffnessNPerM: number, effectiveMass: number, steps: number): number {
  requirePositive("steps", steps);
  return linearContactDurationS(stiffnessNPerM, effectiveMass) / steps;
}

/** Timestep at which one step covers the contact thickness: dt = thickness / v. */
export function tunnellingDtS(speedMPerS: number, thicknessM: number): number {
  requirePositive("speedMPerS", speedMPerS);
  requirePositive("thicknessM", thicknessM);
  return thicknessM / speedMPerS;
}

/** x values spread over [lo, hi], evenly in log space on a log axis. */
export function sampleAxis(lo: number, hi: number, spacing: AxisSpacing, count: number): number[] {
  if (!(count >= 2)) throw new Error(`sample count must be ≥ 2, got ${count}`);
  const xs: number[] = [];
  for (let i = 0; i < count; i++) {
    const f = i / (count - 1);
    xs.push(spacing === "log" ? 10 ** (Math.log10(lo) + f * (Math.log10(hi) - Math.log10(lo))) : lo + f * (hi - lo));
  }
  return xs;
}

/** An overlay from y = f(x), sampled across an x range; non-finite y values break the curve. */
export function overlayFromFunction(
  label: string,
  f: (x: number) => number,
  xRange: readonly [number, number],
  xSpacing: AxisSpacing,
  options: { samples?: number; stroke?: OverlayStroke } = {},
): Overlay {
  const points = sampleAxis(xRange[0], xRange[1], xSpacing, options.samples ?? 64).map((x) => ({ x, y: f(x) }));
  return { label, points, stroke: options.stroke };
}

/** Which of the map's axes holds which quantity. */
export type StiffnessTimestepAxes = "stiffness-x" | "timestep-x";

interface StiffnessOverlayOptions {
  effectiveMassKg: number;
  /** Range of the x axis in axis units. */
  xRange: readonly [number, number];
  xSpacing: AxisSpacing;
  /** stiffness-x: stiffness (N/m) along x and timestep (s) along y; timestep-x the other way round. */
  axes?: StiffnessTimestepAxes;
  samples?: number;
}

/** The ω·dt = 2 curve and, when margin > 0, the ω·dt = 2(1 − margin) curve. */
export function stabilityBoundOverlays(options: StiffnessOverlayOptions & { marginFraction?: number }): Overlay[] {
  const { effectiveMassKg: m, axes = "stiffness-x" } = options;
  const margins = options.marginFraction && options.marginFraction > 0 ? [0, options.marginFraction] : [0];
  return margins.map((margin) => {
    const label = margin === 0 ? "ω·dt = 2 (stability bound)" : `ω·dt = ${formatFactor(2 * (1 - margin))} (${Math.round(margin * 100)} % margin)`;
    const f =
      axes === "stiffness-x"
        ? (k: number) => stabilityLimitDtS(k, m, margin)
        : (dt: number) => stabilityLimitStiffnessNPerM(dt, m, margin);
    return overlayFromFunction(label, f, options.xRange, options.xSpacing, { samples: options.samples, stroke: margin === 0 ? "solid" : "dashed" });
  });
}

function formatFactor(value: number): string {
  return Number(value.toPrecision(3)).toString();
}

/** Contours t_c / dt = N for each N (default 5, 10, 20), linear contact. */
export function stepsPerContactOverlays(options: StiffnessOverlayOptions & { steps?: readonly number[] }): Overlay[] {
  const { effectiveMassKg: m, axes = "stiffness-x" } = options;
  return (options.steps ?? [5, 10, 20]).map((n) => {
    const f =
      axes === "stiffness-x"
        ? (k: number) => dtForStepsPerContactS(k, m, n)
        : // t_c/dt = N ⇔ π/(ω·dt) = N ⇔ k = m·(π / (N·dt))²
          (dt: number) => m * (Math.PI / (n * dt)) ** 2;
    return overlayFromFunction(`${n} steps per contact`, f, options.xRange, options.xSpacing, { samples: options.samples, stroke: "dotted" });
  });
}

/** The v·dt = thickness line; speed (m/s) along x and timestep (s) along y, or the other way round. */
export function tunnellingOverlay(options: {
  thicknessM: number;
  xRange: readonly [number, number];
  xSpacing: AxisSpacing;
  axes?: "speed-x" | "timestep-x";
  samples?: number;
}): Overlay {
  const { thicknessM, axes = "speed-x" } = options;
  // dt = d / v and v = d / dt have the same form.
  const f = (x: number) => (axes === "speed-x" ? tunnellingDtS(x, thicknessM) : thicknessM / x);
  return overlayFromFunction(`v·dt = ${thicknessLabel(thicknessM)} (tunnelling)`, f, options.xRange, options.xSpacing, {
    samples: options.samples,
    stroke: "dashed",
  });
}

function thicknessLabel(thicknessM: number): string {
  return `${Number(thicknessM.toPrecision(3))} m`;
}

/**
 * Clip one segment to a rectangle (Liang–Barsky); returns the clipped end points or null.
 */
export function clipSegment(x0: number, y0: number, x1: number, y1: number, rect: PlotRect): [number, number, number, number] | null {
  const dx = x1 - x0;
  const dy = y1 - y0;
  let t0 = 0;
  let t1 = 1;
  const edges: [number, number][] = [
    [-dx, x0 - rect.left],
    [dx, rect.left + rect.width - x0],
    [-dy, y0 - rect.top],
    [dy, rect.top + rect.height - y0],
  ];
  for (const [p, q] of edges) {
    if (p === 0) {
      if (q < 0) return null;
      continue;
    }
    const r = q / p;
    if (p < 0) {
      if (r > t1) return null;
      if (r > t0) t0 = r;
    } else {
      if (r < t0) return null;
      if (r < t1) t1 = r;
    }
  }
  return [x0 + t0 * dx, y0 + t0 * dy, x0 + t1 * dx, y0 + t1 * dy];
}

/**
 * An overlay in pixels, clipped to the plot: a list of polylines (a curve leaving and re-entering
 * the plot, or crossing a non-finite point, becomes several). Points that cannot be placed on a
 * log axis (≤ 0) break the curve too.
 */
export function overlayToPixelPaths(overlay: Overlay, geometry: MapGeometry): number[][] {
  const paths: number[][] = [];
  let current: number[] | null = null;
  let previous: [number, number] | null = null;
  const close = () => {
    if (current && current.length >= 4) paths.push(current);
    current = null;
  };
  for (const point of overlay.points) {
    const px = valueToPixel(geometry.x, point.x);
    const py = valueToPixel(geometry.y, point.y);
    if (!Number.isFinite(px) || !Number.isFinite(py)) {
      close();
      previous = null;
      continue;
    }
    if (previous) {
      const clipped = clipSegment(previous[0], previous[1], px, py, geometry.plot);
      if (clipped) {
        const [ax, ay, bx, by] = clipped;
        const continues: boolean = current !== null && current[current.length - 2] === ax && current[current.length - 1] === ay;
        if (!continues) {
          close();
          current = [ax, ay];
        }
        current!.push(bx, by);
      } else {
        close();
      }
    }
    previous = [px, py];
  }
  close();
  return paths;
}
