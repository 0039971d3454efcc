/**
 * Adapts a sweep's axes and cells to the map components: which axes are numeric, the map cell ↔
 * sweep cell index mapping for a chosen x, y and slice of the other axes, and the overlays that
 * apply to the chosen axes. Pure functions (unit-testable, no React).
 */
import { axisTickLabel, type MapAxis, type MetricScaleOptions, type OverlayInput } from "@/components/maps/map-model";
import { DEFAULT_TOLERANCES } from "@/lib/physics/constants";
import { reasonForDisplay } from "@/lib/ui/reasons";
import type { PercentileClip } from "@/lib/charts/normalise";
import { dtForStepsPerContactS, effectiveMassKg, stabilityLimitDtS, stabilityLimitStiffnessNPerM, tunnellingDtS } from "@/lib/charts/overlays";
import { pairTangentialEffectiveMassKg, SOLID_DISC_INERTIA_FACTOR, slidingAngleDeg, tangentialEffectiveMassKg } from "@/lib/physics/friction-analytic";
import type { Metrics, Tolerances, Verdict } from "@/lib/physics/types";
import type { SweepSpecInput } from "@/lib/sweeps/spec";
import { sweepMeasuresRotation } from "@/lib/sweeps/results";
import { FRAME_STEP_PATH } from "@/lib/ui/units";
import type { CellRow, SweepAxisView } from "./sweep-api";

/**
 * How each metric is coloured. Energy errors span from 10⁻⁶ on a fine step to 10⁶ on a blown-up
 * one, so they use a symmetric-log scale whose linear part ends a decade below the sweep's own
 * energy tolerance (`constantOfTolerance`): errors near the tolerance get their own colours, and
 * blown-up cells no longer squeeze every other cell into the centre colour.
 */
export interface MetricLayerSpec {
  key: keyof Metrics;
  label: string;
  unit: string;
  normalisation: "linear" | "log" | "symmetric" | "symlog";
  domain?: readonly [number, number];
  /** symlog: the constant C from the sweep's tolerances. */
  constantOfTolerance?: (tolerances: Partial<Tolerances>) => number;
  /** A rotation metric: offered only on sweeps that measure them (`sweepMeasuresRotation`). */
  rotation?: true;
}

const energyConstant = (tolerances: Partial<Tolerances>) => (tolerances.energyDriftRel ?? DEFAULT_TOLERANCES.energyDriftRel) / 10 || 1e-3;

export const METRIC_LAYERS: readonly MetricLayerSpec[] = [
  { key: "maxEnergyErrorRel", label: "largest energy error (relative)", unit: "", normalisation: "symlog", constantOfTolerance: energyConstant },
  { key: "energyErrorRel", label: "final energy error (relative)", unit: "", normalisation: "symlog", constantOfTolerance: energyConstant },
  // 0 … 1: an overlap as deep as the radius is the top colour; blown-up cells far beyond it would
  // otherwise squeeze every useful cell into the bottom of the scale.
  { key: "maxOverlapFraction", label: "deepest overlap / smaller radius", unit: "", normalisation: "linear", domain: [0, 1] },
  { key: "maxOmegaH", label: "largest ω·h in contact", unit: "", normalisation: "log" },
  { key: "amplification", label: "rebound / model's restitution", unit: "", normalisation: "log" },
  { key: "effectiveRestitution", label: "measured restitution", unit: "", normalisation: "linear" },
  { key: "contactDurationS", label: "first contact duration", unit: "s", normalisation: "log" },
  { key: "contactSteps", label: "steps in contact", unit: "steps", normalisation: "linear" },
  { key: "momentumDriftRelX", label: "momentum drift x (relative)", unit: "", normalisation: "symmetric" },
  { key: "momentumDriftRelY", label: "momentum drift y (relative)", unit: "", normalisation: "symmetric" },
  // Runs with friction or rolling resistance, and the resting scenes (stored from packed format 3 on).
  // Signed figures (slip, spin, angle, drift) are centred on zero; figures spanning decades are on a log scale.
  { key: "endSlipMPerS", label: "slip at the end of the first contact", unit: "m/s", normalisation: "symmetric", rotation: true },
  { key: "reboundSpinRadPerS", label: "rebound spin", unit: "rad/s", normalisation: "symmetric", rotation: true },
  { key: "reboundAngleDeg", label: "rebound angle from the normal", unit: "°", normalisation: "symmetric", rotation: true },
  { key: "angularMomentumDriftRel", label: "angular momentum drift (relative)", unit: "", normalisation: "symmetric", rotation: true },
  { key: "maxTangentialOmegaH", label: "largest tangential ω·h", unit: "", normalisation: "log", rotation: true },
  { key: "slidingSteps", label: "steps with a sliding contact", unit: "steps", normalisation: "linear", rotation: true },
  { key: "settleTimeS", label: "settle time", unit: "s", normalisation: "linear", rotation: true },
  { key: "residualKineticJ", label: "residual kinetic energy (last quarter)", unit: "J", normalisation: "log", rotation: true },
  { key: "residualMaxSpeedMPerS", label: "residual top speed (last quarter)", unit: "m/s", normalisation: "log", rotation: true },
  { key: "creepM", label: "creep (second half)", unit: "m", normalisation: "log", rotation: true },
  { key: "restingOverlapFraction", label: "resting overlap / radius", unit: "", normalisation: "linear", rotation: true },
  { key: "restingOverlapRatio", label: "resting overlap / static m·g/k", unit: "", normalisation: "log", rotation: true },
];

/** The layers a sweep's map offers: the rotation metrics only where the sweep measures them. */
export function metricLayersFor(spec: SweepSpecInput, axes: readonly SweepAxisView[]): readonly MetricLayerSpec[] {
  const rotation = sweepMeasuresRotation(spec, axes.map((axis) => ({ parameter: axis.path, values: axis.values })));
  return rotation ? METRIC_LAYERS : METRIC_LAYERS.filter((layer) => !layer.rotation);
}

/** The colour ranges a user can pick for a metric map: every value, or clipped to percentiles. */
export const COLOUR_RANGES: readonly { key: string; label: string; clip?: PercentileClip }[] = [
  { key: "p1-99", label: "1st–99th percentile", clip: { low: 1, high: 99 } },
  { key: "p5-95", label: "5th–95th percentile", clip: { low: 5, high: 95 } },
  { key: "all", label: "All values" },
];

/** The map scale of a metric on this sweep, with the colour range chosen. */
export function metricScale(metric: MetricLayerSpec, tolerances: Partial<Tolerances>, rangeKey: string): MetricScaleOptions {
  const range = COLOUR_RANGES.find((candidate) => candidate.key === rangeKey) ?? COLOUR_RANGES[0];
  return {
    normalisation: metric.normalisation,
    ...(metric.domain ? { domain: metric.domain } : range.clip ? { clip: range.clip } : {}),
    ...(metric.constantOfTolerance ? { constant: metric.constantOfTolerance(tolerances) } : {}),
  };
}

function rangeText(axis: MapAxis): string {
  const values = axis.values;
  const first = axisTickLabel(axis, values[0]);
  const last = axisTickLabel(axis, values[values.length - 1]);
  return `${axis.label} ${first} … ${last}, ${values.length} value${values.length === 1 ? "" : "s"}${axis.spacing === "log" ? ", log spacing" : ""}`;
}

/**
 * The title block of an exported map (the export adds its date): which sweep, over which axes and
 * where the others are held, what the cells show, and the tolerances the verdicts were judged by.
 */
export function mapTitleBlock(input: {
  sweepName: string;
  sweepId: string;
  x: MapAxis;
  y: MapAxis | null;
  held: readonly string[];
  showing: string;
  tolerances: Partial<Tolerances>;
}): string[] {
  const t = { ...DEFAULT_TOLERANCES, ...input.tolerances };
  const lines = [`Sweep: ${input.sweepName} (${input.sweepId})`, `Across: ${rangeText(input.x)}${input.y ? ` · Up: ${rangeText(input.y)}` : ""}`];
  if (input.held.length > 0) lines.push(`Held: ${input.held.join(" · ")}`);
  lines.push(`Showing: ${input.showing}`);
  lines.push(
    `Tolerances: energy drift ${t.energyDriftRel}, overlap ${t.maxOverlapFraction} × radius, blow-up ${t.blowUpEnergyFactor}×, rebound ${t.amplificationLimit}×, restitution ±${t.restitutionRel}, energy peak ${t.energyPeakRel}, ≥ ${t.minStepsPerContact} steps per contact`,
  );
  return lines;
}

export function isNumericAxis(axis: SweepAxisView): boolean {
  return axis.values.length > 0 && axis.values.every((value) => typeof value === "number");
}

/** Positions of an axis's values in increasing order (a range may run downwards; the map needs increasing values). */
export function increasingOrder(values: readonly number[]): number[] {
  return values.map((_, i) => i).sort((a, b) => values[a] - values[b]);
}

export function mapAxisFor(axis: SweepAxisView): MapAxis {
  const numbers = axis.values as number[];
  const sorted = increasingOrder(numbers).map((i) => numbers[i]);
  const spacing = axis.spacing === "log" || (axis.spacing !== "linear" && sorted.length > 2 && sorted[0] > 0 && sorted[sorted.length - 1] / sorted[0] >= 10) ? "log" : "linear";
  return { label: axis.label, unit: axis.unit, values: sorted, spacing, ...(axis.path === FRAME_STEP_PATH ? { quantity: "frame-step" as const } : {}) };
}

/** A one-row axis for a sweep with a single numeric axis. */
export const SINGLE_ROW_AXIS: MapAxis = { label: "(single row)", unit: "", values: [0], spacing: "linear" };

export interface MapSelection {
  x: number;
  /** -1: a single row (fewer than two numeric axes). */
  y: number;
  /** The position chosen on every other axis (ignored for x and y). */
  slice: readonly number[];
}

/** Sweep cell index of each map cell (row-major, row 0 = smallest y), for one slice of the other axes. */
export function mapCellIndices(axes: readonly SweepAxisView[], selection: MapSelection): Int32Array {
  const lengths = axes.map((axis) => axis.values.length);
  const strides = lengths.map((_, i) => lengths.slice(i + 1).reduce((product, n) => product * n, 1));
  const xOrder = increasingOrder(axes[selection.x].values as number[]);
  const yOrder = selection.y >= 0 ? increasingOrder(axes[selection.y].values as number[]) : [0];
  let base = 0;
  axes.forEach((_, i) => {
    if (i !== selection.x && i !== selection.y) base += (selection.slice[i] ?? 0) * strides[i];
  });
  const indices = new Int32Array(xOrder.length * yOrder.length);
  yOrder.forEach((yPosition, row) => {
    xOrder.forEach((xPosition, column) => {
      indices[row * xOrder.length + column] = base + xPosition * strides[selection.x] + (selection.y >= 0 ? yPosition * strides[selection.y] : 0);
    });
  });
  return indices;
}

/** The map's per-cell data: NaN / null for cells not done yet; null metrics (no value) as null. */
/**
 * The hover line on what the integrator did to the contacts: the largest ω·h and the rebound against
 * the model (null when the cell has neither, e.g. no contact, or a result stored before they were measured).
 */
export function dynamicsLine(metrics: Metrics): string | null {
  const parts: string[] = [];
  if (typeof metrics.maxOmegaH === "number") parts.push(`ω·h up to ${Number(metrics.maxOmegaH.toPrecision(3))}`);
  if (typeof metrics.amplification === "number") parts.push(`rebound ${Number(metrics.amplification.toPrecision(3))}× the model's`);
  return parts.length ? parts.join(" · ") : null;
}

export function layerData(
  indices: Int32Array,
  cellsByIndex: ReadonlyMap<number, CellRow>,
  metric: keyof Metrics | null,
): { verdicts: (Verdict | null)[]; reasons: (string | null)[]; values: (number | null)[]; dynamics: (string | null)[] } {
  const verdicts: (Verdict | null)[] = [];
  const reasons: (string | null)[] = [];
  const values: (number | null)[] = [];
  const dynamics: (string | null)[] = [];
  for (const index of indices) {
    const cell = cellsByIndex.get(index);
    verdicts.push(cell ? cell.verdict : null);
    reasons.push(cell ? reasonForDisplay(cell.reason) : null);
    dynamics.push(cell ? dynamicsLine(cell.metrics) : null);
    if (!cell || metric === null) values.push(Number.NaN);
    else {
      const value = cell.metrics[metric];
      values.push(typeof value === "number" && Number.isFinite(value) ? value : typeof value === "boolean" ? Number(value) : null);
    }
  }
  return { verdicts, reasons, values, dynamics };
}

function contactMass(spec: SweepSpecInput): number | null {
  const scene = spec.scenario.scene;
  switch (scene.kind) {
    case "pair":
      return effectiveMassKg(scene.massAKg, scene.massBKg);
    case "wall":
      return effectiveMassKg(scene.massKg);
    case "row":
      return effectiveMassKg(scene.strikerMassKg, scene.massKg);
    case "box":
    case "stack":
      return effectiveMassKg(scene.massKg, scene.massKg);
    case "slope":
      return effectiveMassKg(scene.massKg);
    case "snapshot": {
      // The lightest pair of the snapshot sets the stiffest demand on dt.
      const lightest = Math.min(...scene.bodies.map((body) => body.massKg));
      return effectiveMassKg(lightest, lightest);
    }
  }
}

/**
 * Effective tangential mass m/(1 + m·r²/I) of the scene's lightest frictional contact (kg): two discs
 * add 1/m_t (pairTangentialEffectiveMassKg), a disc on a static wall or slope has its own m/3, a crate
 * on the slope (rotation held) its whole mass. Boxes and stacks: a disc against a disc of the same
 * mass (m/6) is lighter than a disc against the floor (m/3), so it sets the bound.
 */
function tangentialContactMass(spec: SweepSpecInput): number {
  const scene = spec.scenario.scene;
  switch (scene.kind) {
    case "pair":
      return pairTangentialEffectiveMassKg(scene.massAKg, scene.massBKg);
    case "wall":
      return tangentialEffectiveMassKg(scene.massKg);
    case "slope":
      return (scene.body ?? "disc") === "crate" ? scene.massKg : tangentialEffectiveMassKg(scene.massKg);
    case "row":
      return pairTangentialEffectiveMassKg(scene.strikerMassKg, scene.massKg);
    case "box":
    case "stack":
      return pairTangentialEffectiveMassKg(scene.massKg, scene.massKg);
    case "snapshot": {
      const lightest = Math.min(...scene.bodies.map((body) => body.massKg));
      return pairTangentialEffectiveMassKg(lightest, lightest);
    }
  }
}

/**
 * Travel per integrator step beyond which a contact can be skipped: the radius along the incoming
 * direction for a wall, the approaching half-chord R·√(1 − f²) for a pair (the thresholds of
 * wallTunnelingThresholdSpeedMPerS and pairTunnelingThresholdSpeedMPerS in lib/physics/analytic.ts).
 */
function tunnelThicknessM(spec: SweepSpecInput): number | null {
  const scene = spec.scenario.scene;
  if (scene.kind === "wall") return scene.radiusM / Math.cos((scene.angleDeg * Math.PI) / 180);
  if (scene.kind === "pair") return (scene.radiusAM + scene.radiusBM) * Math.sqrt(1 - scene.offsetFraction * scene.offsetFraction);
  return null;
}

/**
 * The spec with one scene or step parameter set to a value (the value of a third axis), so the
 * overlays of each small map follow it. Parameters the overlays do not read leave the spec as is.
 */
export function specWithValue(spec: SweepSpecInput, path: string, value: number): SweepSpecInput {
  const copy = structuredClone(spec);
  const scene = copy.scenario.scene as unknown as Record<string, number | string>;
  if (path === "scene.massRatio" && copy.scenario.scene.kind === "pair") copy.scenario.scene.massBKg = copy.scenario.scene.massAKg * value;
  else if (path.startsWith("scene.") && path.slice(6) in scene) scene[path.slice(6)] = value;
  else if (path === "substeps") copy.scenario.substeps = value;
  return copy;
}

/**
 * Overlays for the chosen axes: ω·dt = 2 and steps-per-contact contours for stiffness × dt (linear
 * contact), ω_t·dt = 2 for the tangential stiffness ratio × dt, the sliding angle for friction ×
 * slope angle, the tunnelling line for speed × dt. The frame step dt is `substeps` integrator steps, so
 * each bound on the integrator step is scaled by substeps to read on the frame-step axis.
 */
export function overlaysFor(spec: SweepSpecInput, xPath: string, yPath: string): OverlayInput[] {
  const substeps = spec.scenario.substeps ?? 1;
  const overlays: OverlayInput[] = [];
  const mass = contactMass(spec);
  const paths = new Set([xPath, yPath]);
  if (mass !== null && spec.scenario.contact.model === "linear" && paths.has("contact.stiffness") && paths.has("dtS")) {
    const stiffnessX = xPath === "contact.stiffness";
    overlays.push({
      label: "ω·dt = 2 (stability bound)",
      stroke: "solid",
      y: stiffnessX ? (k) => substeps * stabilityLimitDtS(k, mass) : (dt) => stabilityLimitStiffnessNPerM(dt / substeps, mass),
    });
    for (const steps of [5, 20]) {
      overlays.push({
        label: `${steps} steps per contact`,
        stroke: "dotted",
        y: stiffnessX ? (k) => substeps * dtForStepsPerContactS(k, mass, steps) : (dt) => mass * (Math.PI / (steps * (dt / substeps))) ** 2,
      });
    }
  }
  // The sliding angle on a slope: a crate (rotation held) slides once tan θ > μ, a rolling solid disc
  // slips once tan θ > 3μ (slidingAngleDeg; Kleppner & Kolenkow, An Introduction to Mechanics, 2014, ch. 2 and 7).
  const scene = spec.scenario.scene;
  if (scene.kind === "slope" && paths.has("scene.angleDeg") && paths.has("contact.friction.coefficient")) {
    const crate = (scene.body ?? "disc") === "crate";
    const inertiaFactor = crate ? Infinity : SOLID_DISC_INERTIA_FACTOR;
    const factor = crate ? 1 : (1 + SOLID_DISC_INERTIA_FACTOR) / SOLID_DISC_INERTIA_FACTOR;
    const coefficientX = xPath === "contact.friction.coefficient";
    overlays.push({
      label: crate ? "tan θ = μ (sliding angle: slides above)" : "tan θ = 3μ (a rolling disc slips above)",
      stroke: "dashed",
      y: coefficientX ? (mu) => slidingAngleDeg(mu, inertiaFactor) : (angleDeg) => Math.tan((angleDeg * Math.PI) / 180) / factor,
    });
  }
  // The tangential bound: the sticking tangential spring k_t = ratio·k on the tangential mass m_t is a
  // harmonic oscillator, stable under symplectic Euler while ω_t·h < 2 with ω_t = √(k_t/m_t)
  // (Hairer, Lubich & Wanner, Geometric Numerical Integration, 2006; maxStableTangentialSubstepS).
  // On the frame-step axis: dt = 2·substeps·√(m_t/(ratio·k)); k_t given in N/m overrides the ratio.
  const contact = spec.scenario.contact;
  if (
    contact.model === "linear" &&
    contact.stiffness !== undefined &&
    contact.friction !== undefined &&
    contact.friction.stiffness === undefined &&
    paths.has("contact.friction.stiffnessRatio") &&
    paths.has("dtS")
  ) {
    const tangentialMass = tangentialContactMass(spec);
    const stiffness = contact.stiffness;
    const ratioX = xPath === "contact.friction.stiffnessRatio";
    overlays.push({
      label: "ω_t·dt = 2 (tangential stability bound)",
      stroke: "solid",
      y: ratioX ? (ratio) => 2 * substeps * Math.sqrt(tangentialMass / (ratio * stiffness)) : (dt) => (tangentialMass * ((2 * substeps) / dt) ** 2) / stiffness,
    });
  }
  const thickness = tunnelThicknessM(spec);
  const speedPaths = ["scene.speedMPerS", "scene.speedAMPerS"];
  const speedPath = speedPaths.find((path) => paths.has(path));
  if (thickness !== null && speedPath && paths.has("dtS")) {
    const speedX = xPath === speedPath;
    overlays.push({
      label: `v·dt = ${Number(thickness.toPrecision(3))} m per step (tunnelling)`,
      stroke: "dashed",
      y: speedX ? (v) => substeps * tunnellingDtS(v, thickness) : (dt) => thickness / (dt / substeps),
    });
  }
  return overlays;
}

/**
 * Why two maps of an integrator axis can be the same: without damping and without gravity, symplectic
 * Euler and velocity Verlet take the bodies through the same positions step for step (both satisfy
 * x_{n+1} − 2x_n + x_{n−1} = h²·a(x_n), and from a force-free start the first steps agree), so
 * contacts, overlaps and verdicts coincide. Returns the note to show when the two compared values are
 * those integrators, the contact is undamped, there is no gravity and the verdict maps are identical.
 */
export function identicalIntegratorsNote(spec: SweepSpecInput, axisPath: string, aValue: unknown, bValue: unknown, aVerdicts: readonly (Verdict | null)[], bVerdicts: readonly (Verdict | null)[]): string | null {
  if (axisPath !== "integrator") return null;
  const pair = new Set([aValue, bValue]);
  if (!(pair.has("symplectic-euler") && pair.has("velocity-verlet"))) return null;
  const damping = spec.scenario.contact.damping ?? { kind: "none" };
  const undamped = damping.kind === "none" || (damping.kind === "coefficient" && damping.value === 0) || (damping.kind === "restitution" && damping.value === 1);
  const scene = spec.scenario.scene as { gravityMPerS2?: number };
  if (!undamped || (scene.gravityMPerS2 ?? 0) !== 0) return null;
  if (aVerdicts.length !== bVerdicts.length || aVerdicts.some((verdict, i) => verdict !== bVerdicts[i])) return null;
  return "The two maps are identical because the contact is undamped: without damping (and gravity) symplectic Euler and velocity Verlet move the bodies through the same positions step for step. Damp the contact (a restitution below 1) to see them differ.";
}
