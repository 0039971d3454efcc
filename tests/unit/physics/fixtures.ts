import * as mathjs from "mathjs";
import { DEFAULT_TOLERANCES, type ContactSpec, type IntegratorName, type Scenario, type Scene } from "@/lib/physics";

/** Invented test props: "Puckworks" studio's air-hockey pucks and crates. */
export function scenario(scene: Scene, contact: ContactSpec, integrator: IntegratorName, dtS: number, durationS: number, overrides: Partial<Scenario> = {}): Scenario {
  return { scene, contact, integrator, dtS, substeps: 1, durationS, tolerances: { ...DEFAULT_TOLERANCES }, seed: 7, ...overrides };
}

export function linearContact(stiffness: number, damping: ContactSpec["damping"] = { kind: "none" }): ContactSpec {
  return { model: "linear", stiffness, damping };
}

export function headOnPair(massAKg: number, massBKg: number, speedAMPerS: number, speedBMPerS = 0, gapM = 0.004, radiusM = 0.05): Scene {
  return { kind: "pair", massAKg, massBKg, radiusAM: radiusM, radiusBM: radiusM, speedAMPerS, speedBMPerS, offsetFraction: 0, gapM };
}

export function relativeError(actual: number, expected: number): number {
  return Math.abs(actual - expected) / Math.abs(expected);
}

/** Least-squares slope of log(error) against log(step). */
export function logLogSlope(steps: readonly number[], errors: readonly number[]): number {
  const xs = steps.map(Math.log);
  const ys = errors.map(Math.log);
  const meanX = xs.reduce((a, b) => a + b, 0) / xs.length;
  const meanY = ys.reduce((a, b) => a + b, 0) / ys.length;
  let numerator = 0;
  let denominator = 0;
  for (let i = 0; i < xs.length; i++) {
    numerator += (xs[i] - meanX) * (ys[i] - meanY);
    denominator += (xs[i] - meanX) ** 2;
  }
  return numerator / denominator;
}

/** mathjs' adaptive Runge–Kutta solver (its type declarations omit solveODE, so it is typed here). */
export interface OdeOptions {
  method?: "RK23" | "RK45";
  tol?: number;
  firstStep?: number;
  maxStep?: number;
  maxIter?: number;
}
export const solveODE = (mathjs as unknown as {
  solveODE: (f: (t: number, y: number[]) => number[], span: [number, number], y0: number[], options?: OdeOptions) => { t: number[]; y: number[][] };
}).solveODE;
