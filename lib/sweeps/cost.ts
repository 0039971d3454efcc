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
 * Calibration (see CALIBRATION below) is a least-squares-free, by-hand fit to
 * the figures printed by `npm run bench` (module cost-calibration) on the
 * development machine. The quote band QUOTE_BAND states how far measured
 * compute may stray from the prediction.
 *
 * Pure: safe to import in the browser (the quote is shown in the form).
 */
import { effectiveModulusSameMaterialPa, hertzContactDurationS, hertzStiffnessFromModulus, linearContactDurationS } from "../physics/analytic";
import type { Scenario } from "../physics/types";
import { cellCount, cellAt, expandAxes, type ExpandedAxis } from "./grid";
import { bodyCount, stepsPerCell } from "./axes";
import type { SweepSpec } from "./spec";

export interface CostConstants {
  /** Fixed cost of one cell in any scene: set-up, metrics, verdict (ns). */
  cellOverheadNs: number;
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
}

/**
 * CALIBRATION — measured on the development machine (2 shared cores, Node 20),
 * single thread, by tests/bench/cost-calibration.ts. Update these figures and
 * the note when the engine changes.
 */
export const CALIBRATION: CostConstants = {
  cellOverheadNs: 24_000,
  pairContactStepNs: 435,
  wallContactStepNs: 175,
  rowStepNs: 0,
  rowBodyStepNs: 390,
  boxStepNs: 92_000,
  boxBodyStepNs: 455,
  chunkOverheadNs: 200_000,
};

/**
 * The band within which billed compute is expected to fall around a quote:
 * billed / quoted ∈ [low, high]. Set from the spread of measured / predicted
 * over the calibration set (see the cost-calibration bench).
 */
export const QUOTE_BAND = { low: 0.5, high: 2 } as const;

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
    case "pair":
      return constants.cellOverheadNs + contactEstimate(scenario).contactSteps * constants.pairContactStepNs;
    case "wall":
      return constants.cellOverheadNs + contactEstimate(scenario).contactSteps * constants.wallContactStepNs;
    case "row":
      return constants.cellOverheadNs + stepsPerCell(scenario) * (constants.rowStepNs + bodyCount(scenario) * constants.rowBodyStepNs);
    case "box":
      return constants.cellOverheadNs + stepsPerCell(scenario) * (constants.boxStepNs + bodyCount(scenario) * constants.boxBodyStepNs);
  }
}

export interface SweepCostEstimate {
  cells: number;
  /** Predicted compute of the whole sweep, integer milliseconds (rounded up, at least 1). */
  computeMs: number;
  /** The largest predicted cell (ms, rounded up). */
  largestCellMs: number;
  /** computeMs × QUOTE_BAND: the range the billed compute is expected in. */
  bandMs: { low: number; high: number };
}

/** Predicted compute of a sweep; `chunks` adds the per-chunk overhead when the chunking is known. */
export function predictSweep(
  spec: SweepSpec,
  options: { chunks?: number; constants?: CostConstants; axes?: readonly ExpandedAxis[] } = {},
): SweepCostEstimate {
  const constants = options.constants ?? CALIBRATION;
  const axes = options.axes ?? expandAxes(spec);
  const cells = cellCount(axes);
  let totalNs = 0;
  let largestNs = 0;
  for (let index = 0; index < cells; index++) {
    const ns = predictCellNs(cellAt(spec, axes, index).scenario, constants);
    totalNs += ns;
    if (ns > largestNs) largestNs = ns;
  }
  const chunks = options.chunks ?? Math.max(1, Math.ceil(totalNs / (DEFAULT_TARGET_CHUNK_MS * 1e6)));
  totalNs += chunks * constants.chunkOverheadNs;
  const computeMs = Math.max(1, Math.ceil(totalNs / 1e6));
  return {
    cells,
    computeMs,
    largestCellMs: Math.ceil(largestNs / 1e6),
    bandMs: { low: Math.floor(computeMs * QUOTE_BAND.low), high: Math.ceil(computeMs * QUOTE_BAND.high) },
  };
}

/** Chunks aim at this much predicted compute: long enough to hide dispatch, short enough for progress and retries. */
export const DEFAULT_TARGET_CHUNK_MS = 2_000;
