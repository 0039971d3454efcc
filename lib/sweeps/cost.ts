/**
 * Cost model: predicted worker compute per cell and per sweep, the basis of
 * quotes and chunk sizes.
 *
 * Shape of the model (from how the engine works):
 * - pair and wall: the engine jumps over free flight and stops once the bodies
 *   separate for good, so a cell costs a fixed overhead plus a cost per
 *   integrator step *in contact*, not per duration/dt. The contact steps are
 *   predicted from the analytic contact duration (linear spring: π/ω with
 *   ω = √(k/m_eff); Hertz: t_c = 2·I·δ_max/v with δ_max = (5·m_eff·v²/(4·k_H))^(2/5)),
 *   divided by dt/substeps.
 * - row and box: every step is integrated; a step costs a fixed part plus a
 *   part per body (the box's broad phase keeps it linear in N).
 *
 * The constants (CALIBRATION below) come from weighted least-squares fits printed
 * by `npm run bench -- cost-calibration`; QUOTE_BAND states how far billed
 * compute may stray from the prediction.
 *
 * Pure: safe to import in the browser (the quote is shown in the form).
 */
import { effectiveModulusSameMaterialPa, hertzContactDurationS, hertzStiffnessFromModulus, linearContactDurationS } from "../physics/analytic";
import type { Scenario } from "../physics/types";
import { bodyCount, stepsPerCell } from "./axes";

export interface CostConstants {
  /** Fixed cost of one wall, row or box cell: set-up, metrics, verdict (ns). */
  cellOverheadNs: number;
  /**
   * Fixed cost of one pair cell (ns). Larger than the others because glancing and deep-overlap
   * pairs often cannot finish early and step their free flight to the end (cheap steps, many).
   */
  pairCellOverheadNs: number;
  /** pair: cost of one integrator step while the discs touch (ns). */
  pairContactStepNs: number;
  /** wall: cost of one integrator step while the disc touches the wall (ns). */
  wallContactStepNs: number;
  /** row: cost of one step = fixed + per body (ns). */
  rowStepNs: number;
  rowBodyStepNs: number;
  /** box: cost of one step = fixed + per body, broad phase included (ns). */
  boxStepNs: number;
  boxBodyStepNs: number;
  /** Fixed cost of one chunk inside the worker (ns): receiving cells, sending results. */
  chunkOverheadNs: number;
  /**
   * Hertz contact with a target restitution: the engine solves e → damping numerically once per
   * distinct e and thread (then caches it). Charged once per distinct value per chunk.
   */
  hertzRestitutionSolveNs: number;
}

/**
 * CALIBRATION — fitted by tests/bench/cost-calibration.ts (npm run bench -- cost-calibration) on
 * the development machine, 2026-12-01, Node 20, one warm worker thread, 2 cores shared with other
 * work. Quiet run (load average ≈ 3): pair 2.7 µs + 170 ns per contact step on repeats of one
 * cell, but 15–26 µs per distinct cell of a real grid (glancing and deep-overlap pairs step their
 * free flight to the end), hence pairCellOverheadNs; wall 3.9 µs + 96 ns per contact step; row
 * ≈ 100 ns and box ≈ 270 ns per body-step (box: grid broad phase, gravity on). Loaded runs
 * (load ≈ 11) measured 1.5–4× those figures. A Hertz e → damping solve took 2–10 ms per new e.
 * The constants sit at the quiet figures with a margin; update them and this note when the
 * engine changes.
 */
export const CALIBRATION: CostConstants = {
  cellOverheadNs: 6_000,
  pairCellOverheadNs: 22_000,
  pairContactStepNs: 200,
  wallContactStepNs: 150,
  rowStepNs: 3_000,
  rowBodyStepNs: 120,
  boxStepNs: 500,
  boxBodyStepNs: 300,
  chunkOverheadNs: 200_000,
  hertzRestitutionSolveNs: 4_000_000,
};

/**
 * The band within which billed compute is expected to fall around a quote:
 * billed / quoted ∈ [low, high]. Measured with these constants over seven sweeps of every scene
 * kind, first and second runs in a thread (see the calibration bench): see the report printed by
 * `npm run bench -- cost-calibration`; the band adds room for a busy host (×4 seen on the
 * development machine under load). It narrows on hosts not shared with other work.
 */
export const QUOTE_BAND = { low: 0.25, high: 4 } as const;

interface ContactEstimate {
  /** Predicted integrator steps with the bodies in contact. */
  contactSteps: number;
}

/** Hertz k_H of a scenario: given directly, or from the material (discs and walls of one material, as the engine models it). */
function hertzStiffness(scenario: Scenario, reducedRadiusM: number): number {
  const { contact } = scenario;
  if (contact.stiffness !== undefined) return contact.stiffness;
  const material = contact.material as { youngsModulusPa: number; poissonRatio: number };
  return hertzStiffnessFromModulus(effectiveModulusSameMaterialPa(material.youngsModulusPa, material.poissonRatio), reducedRadiusM);
}

/**
 * Duration of one impact from the undamped closed forms (the engine's analytic helpers): linear
 * π/ω (Luding 2008), Hertz 2·I·δ_max/v (Johnson 1985, §11.1). Damping changes it by tens of
 * per cent at most for the restitutions games use, well inside QUOTE_BAND.
 */
export function estimateContactDurationS(scenario: Scenario, reducedMassKg: number, reducedRadiusM: number, normalSpeedMPerS: number): number {
  if (!(normalSpeedMPerS > 0)) return 0;
  if (scenario.contact.model === "linear") return linearContactDurationS(scenario.contact.stiffness as number, reducedMassKg);
  return hertzContactDurationS(hertzStiffness(scenario, reducedRadiusM), reducedMassKg, normalSpeedMPerS);
}

function contactEstimate(scenario: Scenario): ContactEstimate {
  const scene = scenario.scene;
  const subStepS = scenario.dtS / scenario.substeps;
  let durationS = 0;
  if (scene.kind === "pair") {
    const reducedMassKg = (scene.massAKg * scene.massBKg) / (scene.massAKg + scene.massBKg);
    const reducedRadiusM = (scene.radiusAM * scene.radiusBM) / (scene.radiusAM + scene.radiusBM);
    const normalSpeed = (scene.speedAMPerS + scene.speedBMPerS) * Math.sqrt(Math.max(0, 1 - scene.offsetFraction ** 2));
    durationS = estimateContactDurationS(scenario, reducedMassKg, reducedRadiusM, normalSpeed);
  } else if (scene.kind === "wall") {
    const normalSpeed = scene.speedMPerS * Math.cos((scene.angleDeg * Math.PI) / 180);
    durationS = estimateContactDurationS(scenario, scene.massKg, scene.radiusM, normalSpeed);
  }
  // +2: the step that detects the overlap and the one that sees it end.
  const contactSteps = Math.min(stepsPerCell(scenario), Math.ceil(durationS / subStepS) + 2);
  return { contactSteps };
}

/** Predicted compute of one cell in nanoseconds (a float; sums are rounded once). */
export function predictCellNs(scenario: Scenario, constants: CostConstants = CALIBRATION): number {
  const scene = scenario.scene;
  switch (scene.kind) {
    // With friction the engine integrates rotation and never jumps over free flight
    // (lib/physics/simulate.ts, step-loop.ts): every step is taken, each at the friction factor.
    case "pair":
      if (frictionCostFactor(scenario) > 1) return constants.pairCellOverheadNs + stepsPerCell(scenario) * constants.pairContactStepNs * FRICTION_STEP_COST_FACTOR;
      return constants.pairCellOverheadNs + contactEstimate(scenario).contactSteps * constants.pairContactStepNs;
    case "wall":
      if (frictionCostFactor(scenario) > 1) return constants.cellOverheadNs + stepsPerCell(scenario) * constants.wallContactStepNs * FRICTION_STEP_COST_FACTOR;
      return constants.cellOverheadNs + contactEstimate(scenario).contactSteps * constants.wallContactStepNs;
    case "row":
      return constants.cellOverheadNs + stepsPerCell(scenario) * (constants.rowStepNs + bodyCount(scenario) * constants.rowBodyStepNs);
    case "box":
    // A snapshot takes the box's force pass, integrator and walls per body and step: priced alike.
    case "snapshot":
      return constants.cellOverheadNs + stepsPerCell(scenario) * (constants.boxStepNs + bodyCount(scenario) * constants.boxBodyStepNs) * frictionCostFactor(scenario);
    // The body rests on the incline: in contact at every step.
    case "slope":
      return constants.cellOverheadNs + stepsPerCell(scenario) * constants.wallContactStepNs * frictionCostFactor(scenario);
    // A stack's force pass is the box's (grid, walls, a contact or two per body).
    case "stack":
      return constants.cellOverheadNs + stepsPerCell(scenario) * (constants.boxStepNs + bodyCount(scenario) * constants.boxBodyStepNs) * frictionCostFactor(scenario);
  }
}

/**
 * Cost of friction per step relative to the frictionless engine (the tangential law, its history
 * and the rotational update): FRICTION_STEP_COST_FACTOR when friction or rolling resistance is on,
 * else 1. Measured by `npm run bench -- friction` (the 1,000-disc box with and without friction).
 */
export const FRICTION_STEP_COST_FACTOR = 1.6;

export function frictionCostFactor(scenario: Scenario): number {
  const { friction, rollingResistance } = scenario.contact;
  const on = (friction !== undefined && (friction.coefficient > 0 || (friction.staticCoefficient ?? 0) > 0)) || (rollingResistance ?? 0) > 0;
  return on ? FRICTION_STEP_COST_FACTOR : 1;
}

/** A key for the one-off work a cell needs in a fresh chunk (see hertzRestitutionSolveNs), or null. */
export function oneOffKey(scenario: Scenario): string | null {
  const { contact } = scenario;
  return contact.model === "hertz" && contact.damping.kind === "restitution" ? `hertz-e:${contact.damping.value}` : null;
}

/** Chunks aim at this much predicted compute: long enough to hide dispatch, short enough for progress and retries. */
export const DEFAULT_TARGET_CHUNK_MS = 2_000;
