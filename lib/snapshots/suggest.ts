/**
 * A first sweep over a snapshot, suggested from the scene's own masses, sizes and speeds: a
 * stiffness × frame-step map placed where this scene's contacts change verdict, with the reasoning
 * kept as numbers so the builder can show it.
 *
 * The estimate, step by step (linear penalty contact, SI units):
 * 1. Which contacts happen in the run. Two free discs keep their relative velocity u = v_j − v_i
 *    (gravity accelerates both alike), so they meet within the run exactly when their centres come
 *    within r_i + r_j during [0, T] on the straight relative path. A disc meets a wall when its
 *    distance to it is covered within T by its speed towards the wall and the gravity along the
 *    wall's normal. Discs already (nearly) touching — a block of crates, a stack — are pushed into
 *    each other by whatever strikes them, so they count too. Under gravity a disc above another
 *    (their centres closer sideways than r_i + r_j) lands on it, not on the floor beneath both.
 * 2. The stiffness that keeps impacts shallow. An undamped linear contact hit at closing speed v
 *    reaches δ_max = v·√(m* / k) (Luding 2008, "Introduction to discrete element methods", Eur. J.
 *    Environ. Civ. Eng. 12, δ_max = v/ω0; lib/physics/analytic.ts linearMaxOverlapM), m* the
 *    pairing's reduced mass. The closing speed is taken as |u| (head-on: the most any contact of
 *    that pair can close at, before other discs join in) plus, under gravity, the speed gained
 *    falling through the gap; against a wall it is the speed at the wall from energy. Keeping
 *    δ_max within a target share of the smaller radius needs k ≥ m*·v² / (target·r)². Damping only
 *    lowers δ_max, so this errs stiff.
 * 3. Resting under gravity: a disc carrying the discs stacked above it sinks δ = load / k
 *    (Hooke), so k ≥ load / (target·r).
 * 4. The step that stiffness allows. Symplectic Euler and velocity Verlet are stable on a linear
 *    contact for ω·h < 2, ω = √(k/m*) (Hairer, Lubich & Wanner 2006, Geometric Numerical
 *    Integration, the harmonic oscillator); the lightest pairing that meets has the highest ω, so
 *    it sets the largest stable step 2·√(m* / k).
 * The sweep then spans two decades of stiffness around the estimate (soft enough to show deep
 * overlaps, stiff enough to show the step bound) and frame steps from the game's frame step (60 Hz,
 * common practice for fixed-step game physics; the snapshot does not say its game's rate) down by
 * halvings to a quarter of the bound at the estimate (ω·h ≤ 0.5, about six steps per contact), or
 * up past the bound at the stiffest column when the game's step is well inside it.
 *
 * Pure: safe to import in the browser. Deterministic: the same scene gives the same suggestion.
 */
import "server-only";
import { maxStableSubstepS, reducedMassKg } from "../physics/analytic";
import { DEFAULT_TOLERANCES } from "../physics/constants";
import type { SnapshotScene } from "../physics/types";
import { numericRule } from "../sweeps/parameters";
import { formatFrameStep, formatNumber, formatSI } from "../ui/units";

/** Simulated time of each suggested cell (s): the span of a collision burst a player watches. */
export const SUGGESTED_DURATION_S = 1;
/** The game's frame step when the snapshot does not say (60 Hz: common practice for fixed-step game physics). */
export const GAME_FRAME_STEP_S = 1 / 60;
/**
 * The overlap the estimate aims at, as a share of the deep-overlap tolerance: half (5 % of the
 * smaller radius at the default 10 %), so the suggested middle column holds with room for the
 * chains of contacts the estimate does not follow (our choice; "a few per cent of the radius" is
 * common practice for penalty contacts in games).
 */
export const TARGET_SHARE_OF_TOLERANCE = 0.5;
/** Discs closer than this share of the smaller radius count as touching (a block, a stack): our choice, 10 %. */
export const TOUCHING_GAP_FRACTION = 0.1;
/**
 * The stiffness axis runs from the estimate / STIFFNESS_SOFTER to the estimate × STIFFNESS_STIFFER:
 * two decades (common practice for a first log sweep), reaching further to the soft side because
 * the estimate errs stiff (undamped, head-on, from the fastest approach).
 */
export const STIFFNESS_SOFTER = 30;
export const STIFFNESS_STIFFER = 3;
/** Values on the stiffness axis (half a decade apart). */
export const STIFFNESS_COUNT = 5;
/**
 * The finest step is at most the bound / FINEST_STEP_DIVISOR at the estimate: ω·h ≤ 0.5, about six
 * steps per undamped contact (π/(ω·h)), so a damped contact still lasts the three steps the verdict
 * rules ask for (DEFAULT_TOLERANCES.minStepsPerContact).
 */
export const FINEST_STEP_DIVISOR = 4;
/** The frame-step axis has at least this many halvings below the game's step, and at most this many values. */
const MIN_HALVINGS = 4;
const MAX_STEP_VALUES = 9;

/** Where a contact is: two discs (0-based indices in the file) or a disc and a wall. */
export interface SuggestionContact {
  body: number;
  /** The other disc, or null for a wall. */
  other: number | null;
  /** The wall (0-based), or null for two discs. */
  wall: number | null;
  /** m* (kg): the reduced mass, or the disc's own mass against a wall. */
  effectiveMassKg: number;
  /** The closing speed the estimate uses (m/s). */
  closingSpeedMPerS: number;
  /** The smaller radius of the two (m): overlaps are judged against it. */
  radiusM: number;
}

export interface SnapshotSweepSuggestion {
  /** "derived": the axes come from the scene; "nothing-meets": no contact in the run, a general grid. */
  basis: "derived" | "nothing-meets";
  /** The deep-overlap tolerance the sweep judges by (fraction of the smaller radius). */
  toleranceOverlapFraction: number;
  /** The overlap the estimate aims at (fraction of the smaller radius). */
  targetOverlapFraction: number;
  /** How many contacts (disc pairs and disc–wall) happen in the run by step 1. */
  contactCount: number;
  /** The impact that needs the stiffest spring, with that stiffness; null without moving contacts. */
  impact: (SuggestionContact & { stiffnessNPerM: number }) | null;
  /** The disc whose resting load needs the stiffest spring (gravity only). */
  resting: { body: number; loadN: number; radiusM: number; stiffnessNPerM: number } | null;
  /** The lightest pairing that meets (it sets the step bound). */
  lightest: SuggestionContact | null;
  /** The estimate: the larger of the impact and resting stiffness, to two figures (N/m). */
  stiffnessNPerM: number;
  /** 2·√(m* / k) at the estimate (s); null when no pairing meets. */
  maxStableStepS: number | null;
  /** The game's frame step assumed (s). */
  gameFrameStepS: number;
  /** The stiffest spring the game's step holds for the lightest pairing: m*·(2/h)² (N/m); null when no pairing meets. */
  stiffnessCapAtGameStepNPerM: number | null;
  /** The sweep's axes. */
  stiffnessAxis: { from: number; to: number; count: number };
  frameSteps: number[];
  durationS: number;
}

function twoFigures(value: number): number {
  return Number(value.toPrecision(2));
}

interface Demand {
  contact: SuggestionContact;
  stiffnessNPerM: number;
}

/** Step 1–3 over every pair and wall (pairs swept in x order, only those that can reach each other). */
function scanContacts(scene: SnapshotScene, durationS: number, target: number) {
  const bodies = scene.bodies;
  const n = bodies.length;
  const g = scene.gravityMPerS2;
  const scale = scene.speedScale;
  let impact: Demand | null = null;
  let lightest: SuggestionContact | null = null;
  let contactCount = 0;
  const loadN = new Float64Array(n);
  // Under gravity each disc lands on the nearest disc beneath it in its column (−1: none), not on the floor below.
  const below = new Int32Array(n).fill(-1);
  const belowGapM = new Float64Array(n).fill(Infinity);
  for (let i = 0; i < n; i++) loadN[i] = bodies[i].massKg * g;

  const consider = (contact: SuggestionContact) => {
    contactCount++;
    const stiffnessNPerM = (contact.effectiveMassKg * contact.closingSpeedMPerS ** 2) / (target * contact.radiusM) ** 2;
    if (stiffnessNPerM > 0 && (impact === null || stiffnessNPerM > impact.stiffnessNPerM)) impact = { contact, stiffnessNPerM };
    if (lightest === null || contact.effectiveMassKg < lightest.effectiveMassKg) lightest = contact;
  };

  let maxRadius = 0;
  let maxSpeed = 0;
  for (const body of bodies) {
    maxRadius = Math.max(maxRadius, body.radiusM);
    maxSpeed = Math.max(maxSpeed, Math.hypot(body.vxMPerS, body.vyMPerS) * scale);
  }
  // Sideways, two discs can close by at most 2·maxSpeed·T (gravity acts along y only).
  const reachX = 2 * maxRadius * (1 + TOUCHING_GAP_FRACTION) + 2 * maxSpeed * durationS;
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => bodies[a].xM - bodies[b].xM || a - b);
  for (let p = 0; p < n; p++) {
    const i = order[p];
    const a = bodies[i];
    for (let q = p + 1; q < n; q++) {
      const j = order[q];
      const b = bodies[j];
      const dx = b.xM - a.xM;
      if (dx > reachX) break;
      const dy = b.yM - a.yM;
      const reach = a.radiusM + b.radiusM;
      const ux = (b.vxMPerS - a.vxMPerS) * scale;
      const uy = (b.vyMPerS - a.vyMPerS) * scale;
      // Math.sqrt of the sum, not Math.hypot, in this O(pairs) loop: hypot is many times slower in V8.
      const distance = Math.sqrt(dx * dx + dy * dy);
      const gap = distance - reach;
      // One above the other under gravity: the upper rests on the lower in the end, its load passing down the column.
      if (g > 0 && Math.abs(dx) < reach) {
        const [upper, lower] = dy > 0 ? [j, i] : [i, j];
        loadN[lower] += bodies[upper].massKg * g;
        if (gap < belowGapM[upper]) {
          belowGapM[upper] = gap;
          below[upper] = lower;
        }
      }
      const touching = gap <= TOUCHING_GAP_FRACTION * Math.min(a.radiusM, b.radiusM);
      // Closest approach on the straight relative path within [0, T].
      const uu = ux * ux + uy * uy;
      const tClosest = uu > 0 ? Math.min(durationS, Math.max(0, -(dx * ux + dy * uy) / uu)) : 0;
      const cx = dx + ux * tClosest;
      const cy = dy + uy * tClosest;
      const meets = cx * cx + cy * cy <= reach * reach;
      if (!touching && !meets) continue;
      consider({ body: Math.min(i, j), other: Math.max(i, j), wall: null, effectiveMassKg: reducedMassKg(a.massKg, b.massKg), closingSpeedMPerS: Math.sqrt(uu), radiusM: Math.min(a.radiusM, b.radiusM) });
    }
  }
  // Landings under gravity: a disc falls onto the nearest disc beneath it if the run is long
  // enough, gaining √(2·g·gap) over their relative speed (the lower may already rest).
  for (let upper = 0; upper < n; upper++) {
    const lower = below[upper];
    if (lower < 0) continue;
    const a = bodies[upper];
    const b = bodies[lower];
    const relativeMPerS = Math.hypot(a.vxMPerS - b.vxMPerS, a.vyMPerS - b.vyMPerS) * scale;
    const gap = Math.max(0, belowGapM[upper]);
    if (gap > 0.5 * g * durationS * durationS + relativeMPerS * durationS) continue;
    consider({ body: Math.min(upper, lower), other: Math.max(upper, lower), wall: null, effectiveMassKg: reducedMassKg(a.massKg, b.massKg), closingSpeedMPerS: relativeMPerS + Math.sqrt(2 * g * gap), radiusM: Math.min(a.radiusM, b.radiusM) });
  }

  scene.walls.forEach((wall, w) => {
    const length = Math.hypot(wall.normalX, wall.normalY);
    const nx = wall.normalX / length;
    const ny = wall.normalY / length;
    const offset = wall.offsetM / length;
    // Gravity's pull towards the wall (along −n): a floor (n up) pulls discs onto it.
    const pull = ny * g;
    for (let i = 0; i < n; i++) {
      const body = bodies[i];
      const gap = nx * body.xM + ny * body.yM - offset - body.radiusM;
      const towards = -(nx * body.vxMPerS + ny * body.vyMPerS) * scale;
      // Distance covered towards the wall by T: towards·T + ½·pull·T² (its largest over [0, T] when it turns back).
      const turnS = pull < 0 && towards > 0 ? Math.min(durationS, towards / -pull) : durationS;
      const covered = towards * turnS + 0.5 * pull * turnS * turnS;
      const touching = gap <= TOUCHING_GAP_FRACTION * body.radiusM;
      if (!touching && covered < gap) continue;
      // Falling onto a floor with a disc in between: it lands on that disc (counted with the pair).
      if (!touching && ny > 0 && below[i] >= 0) continue;
      // The speed at the wall from energy: v² = towards² + 2·pull·gap.
      const closingSpeedMPerS = Math.sqrt(Math.max(0, towards * towards + 2 * pull * Math.max(0, gap)));
      consider({ body: i, other: null, wall: w, effectiveMassKg: body.massKg, closingSpeedMPerS, radiusM: body.radiusM });
    }
  });

  let resting: SnapshotSweepSuggestion["resting"] = null;
  const floor = g > 0 && scene.walls.some((wall) => wall.normalY > 0);
  if (floor) {
    for (let i = 0; i < n; i++) {
      const stiffnessNPerM = loadN[i] / (target * bodies[i].radiusM);
      if (resting === null || stiffnessNPerM > resting.stiffnessNPerM) resting = { body: i, loadN: loadN[i], radiusM: bodies[i].radiusM, stiffnessNPerM };
    }
  }
  return { impact: impact as Demand | null, lightest: lightest as SuggestionContact | null, resting, contactCount };
}

/** Frame steps: the game's step and its halvings (and doublings past the bound when the game's step is well inside it). */
function frameStepValues(gameStepS: number, stableStepS: number, stiffestBoundS: number, durationS: number): number[] {
  const maxStep = Math.min(numericRule("dtS", "snapshot").max, durationS);
  // Finest: at or below the bound / FINEST_STEP_DIVISOR at the estimate, and never fewer than MIN_HALVINGS halvings.
  let halvings = Math.max(MIN_HALVINGS, Math.ceil(Math.log2(gameStepS / (stableStepS / FINEST_STEP_DIVISOR))));
  // Coarsest: past the bound at the stiffest column, so the map shows where the step gives way.
  let doublings = stiffestBoundS > gameStepS ? Math.ceil(Math.log2(stiffestBoundS / gameStepS)) + 1 : 0;
  while (doublings > 0 && gameStepS * 2 ** doublings > maxStep) doublings--;
  // Keep the axis to MAX_STEP_VALUES: drop doublings first, then the finest halvings beyond the needed ones.
  while (halvings + doublings + 1 > MAX_STEP_VALUES && doublings > 1) doublings--;
  if (halvings + doublings + 1 > MAX_STEP_VALUES) halvings = MAX_STEP_VALUES - 1 - doublings;
  const rate = 1 / gameStepS;
  const values: number[] = [];
  // 1/(rate·2^j) written as one division, so 60 Hz halvings are exactly 1/120, 1/240, … as typed.
  for (let j = halvings; j >= 1; j--) values.push(1 / (rate * 2 ** j));
  values.push(gameStepS);
  for (let j = 1; j <= doublings; j++) values.push(gameStepS * 2 ** j);
  return values;
}

/** The suggestion for a snapshot scene, judged by `toleranceOverlapFraction` (default: the engine's 10 %). */
export function suggestSnapshotSweep(scene: SnapshotScene, options: { toleranceOverlapFraction?: number; gameFrameStepS?: number; durationS?: number } = {}): SnapshotSweepSuggestion {
  const tolerance = options.toleranceOverlapFraction ?? DEFAULT_TOLERANCES.maxOverlapFraction;
  const target = tolerance * TARGET_SHARE_OF_TOLERANCE;
  const gameFrameStepS = options.gameFrameStepS ?? GAME_FRAME_STEP_S;
  const durationS = options.durationS ?? SUGGESTED_DURATION_S;
  const { impact, lightest, resting, contactCount } = scanContacts(scene, durationS, target);
  const demanded = Math.max(impact?.stiffnessNPerM ?? 0, resting?.stiffnessNPerM ?? 0);
  const rule = numericRule("contact.stiffness", "snapshot");
  if (!(demanded > 0) || lightest === null) {
    // Nothing meets in the run at the exported speeds: the general grid of game crates (10 kN/m – 1 MN/m).
    return {
      basis: "nothing-meets",
      toleranceOverlapFraction: tolerance,
      targetOverlapFraction: target,
      contactCount,
      impact: null,
      resting: null,
      lightest,
      stiffnessNPerM: 1e5,
      maxStableStepS: lightest ? maxStableSubstepS(1e5, lightest.effectiveMassKg) : null,
      gameFrameStepS,
      stiffnessCapAtGameStepNPerM: lightest ? lightest.effectiveMassKg * (2 / gameFrameStepS) ** 2 : null,
      stiffnessAxis: { from: 1e4, to: 1e6, count: STIFFNESS_COUNT },
      frameSteps: frameStepValues(gameFrameStepS, gameFrameStepS, 0, durationS),
      durationS,
    };
  }
  const stiffnessNPerM = Math.min(rule.max / STIFFNESS_STIFFER, twoFigures(demanded));
  const mLight = lightest.effectiveMassKg;
  const maxStableStepS = maxStableSubstepS(stiffnessNPerM, mLight);
  const stiffest = stiffnessNPerM * STIFFNESS_STIFFER;
  return {
    basis: "derived",
    toleranceOverlapFraction: tolerance,
    targetOverlapFraction: target,
    contactCount,
    impact: impact ? { ...impact.contact, stiffnessNPerM: impact.stiffnessNPerM } : null,
    resting,
    lightest,
    stiffnessNPerM,
    maxStableStepS,
    gameFrameStepS,
    stiffnessCapAtGameStepNPerM: mLight * (2 / gameFrameStepS) ** 2,
    stiffnessAxis: { from: twoFigures(stiffnessNPerM / STIFFNESS_SOFTER), to: twoFigures(stiffest), count: STIFFNESS_COUNT },
    frameSteps: frameStepValues(gameFrameStepS, maxStableStepS, maxStableSubstepS(stiffest, mLight), durationS),
    durationS,
  };
}

/** A contact as users count: "disc 35 and disc 24", "disc 3 and wall 1". */
function contactText(contact: SuggestionContact): string {
  return contact.other !== null ? `disc ${contact.body + 1} and disc ${contact.other + 1}` : `disc ${contact.body + 1} and wall ${(contact.wall ?? 0) + 1}`;
}

const percent = (fraction: number) => `${formatNumber(fraction * 100)} %`;

/** The reasoning behind a suggestion, as sentences for the builder (numbers as the screens write them). */
export function describeSnapshotSuggestion(suggestion: SnapshotSweepSuggestion): string[] {
  const run = `${formatNumber(suggestion.durationS)} s`;
  const steps = suggestion.frameSteps;
  const grid = `The sweep: contact stiffness ${formatSI(suggestion.stiffnessAxis.from, "N/m")} – ${formatSI(suggestion.stiffnessAxis.to, "N/m")} (${suggestion.stiffnessAxis.count} values, log) × frame step ${formatFrameStep(steps[0])} – ${formatFrameStep(steps[steps.length - 1])} (${steps.length} values: the game's step and its halvings${steps[steps.length - 1] > suggestion.gameFrameStepS ? " and doublings" : ""}), ${run} each.`;
  if (suggestion.basis === "nothing-meets") {
    return [
      `No two discs, and no disc and wall, meet in the first ${run} at the exported speeds, so nothing in the scene places the map: the sweep keeps a general grid for game crates. Raise the speed scale, or upload a moment closer to the collisions.`,
      grid,
    ];
  }
  const target = percent(suggestion.targetOverlapFraction);
  const lines: string[] = [`In the first ${run} at the exported speeds, ${formatNumber(suggestion.contactCount)} contacts happen (discs closing on each other or already touching, discs reaching a wall).`];
  const impact = suggestion.impact;
  if (impact) {
    lines.push(
      `Hardest impact: ${contactText(impact)}, closing at up to ${formatSI(impact.closingSpeedMPerS, "m/s")} with effective mass ${formatSI(impact.effectiveMassKg, "kg")}. An undamped contact sinks v·√(m*/k); keeping that within ${target} of the smaller radius (${formatSI(impact.radiusM, "m")}), half the ${percent(suggestion.toleranceOverlapFraction)} deep-overlap tolerance, needs k ≥ ${formatSI(impact.stiffnessNPerM, "N/m")}.`,
    );
  }
  const resting = suggestion.resting;
  if (resting) {
    lines.push(`Resting under gravity: disc ${resting.body + 1} carries ${formatSI(resting.loadN, "N")} (itself and the discs above it); sinking load/k within ${target} of its radius needs k ≥ ${formatSI(resting.stiffnessNPerM, "N/m")}.`);
  }
  lines.push(`Estimate: k ≈ ${formatSI(suggestion.stiffnessNPerM, "N/m")}. It errs stiff (no damping, head-on), so the map reaches further to the soft side.`);
  const lightest = suggestion.lightest;
  if (lightest && suggestion.maxStableStepS !== null && suggestion.stiffnessCapAtGameStepNPerM !== null) {
    lines.push(
      `The lightest pairing that meets (${contactText(lightest)}, m* = ${formatSI(lightest.effectiveMassKg, "kg")}) sets the step: symplectic Euler and velocity Verlet stay stable while ω·h < 2, ω = √(k/m*), so at the estimate the step must stay below ${formatSI(suggestion.maxStableStepS, "s")}.`,
    );
    const cap = suggestion.stiffnessCapAtGameStepNPerM;
    lines.push(
      cap >= suggestion.stiffnessNPerM
        ? `At the game's frame step (${formatFrameStep(suggestion.gameFrameStepS)} assumed) that pairing holds springs up to ${formatSI(cap, "N/m")}, above the estimate: one step per frame should do.`
        : `At the game's frame step (${formatFrameStep(suggestion.gameFrameStepS)} assumed) that pairing holds springs only up to ${formatSI(cap, "N/m")}, below the estimate: expect to need substeps (or a softer spring and deeper overlaps).`,
    );
  }
  lines.push(grid);
  return lines;
}
