/**
 * Conversions between a target coefficient of restitution and the damping parameter of each
 * contact model. The engine clamps the total normal force at ≥ 0, so a contact ends when the force
 * returns to zero; every conversion here uses that criterion, which is what the engine measures.
 */
import { linearDampingRatioOverlapCriterion, linearRestitutionForDampingRatio } from "./analytic";

/**
 * Damping ratio ζ of the clamped linear spring–dashpot that yields restitution e (inverse of
 * Schwager & Pöschel 2007's e(ζ), solved by bisection; e(ζ) decreases monotonically from 1 at
 * ζ = 0 towards 0 as ζ → ∞).
 */
export function linearDampingRatioForRestitution(restitution: number): number {
  return cachedConversion(linearRatioCache, restitution, solveLinearDampingRatio);
}

function solveLinearDampingRatio(restitution: number): number {
  let low = 0;
  let high = 1;
  while (linearRestitutionForDampingRatio(high) > restitution) high *= 2;
  for (let iteration = 0; iteration < 200 && high - low > 1e-15 * high; iteration++) {
    const middle = 0.5 * (low + high);
    if (linearRestitutionForDampingRatio(middle) > restitution) low = middle;
    else high = middle;
  }
  return 0.5 * (low + high);
}

const linearRatioCache = new Map<number, number>();
const hertzDampingCache = new Map<number, number>();
const hertzRestitutionCache = new Map<number, number>();
const MAX_CACHED_CONVERSIONS = 4096;

function rememberConversion(cache: Map<number, number>, key: number, value: number): void {
  if (cache.size >= MAX_CACHED_CONVERSIONS) cache.clear();
  cache.set(key, value);
}

/**
 * The damping for restitution e in (0, 1] (a RangeError naming the value otherwise): 0 for e = 1
 * (no damping), else `solve(e)`, remembered in `cache`.
 */
function cachedConversion(cache: Map<number, number>, restitution: number, solve: (restitution: number) => number): number {
  if (!(restitution > 0 && restitution <= 1)) {
    throw new RangeError(`restitution must be in (0, 1], got ${restitution}`);
  }
  if (restitution === 1) return 0;
  const cached = cache.get(restitution);
  if (cached !== undefined) return cached;
  const damping = solve(restitution);
  rememberConversion(cache, restitution, damping);
  return damping;
}

/** Dimensionless time step of the reference integration of the Hertz contact. */
const HERTZ_REFERENCE_STEP = 2e-4;
/** Start of the integration; the series solution bridges the δ^{1/4} singularity at t = 0. */
const HERTZ_REFERENCE_START = 1e-4;
/** Guard against a contact that never ends (cannot happen for finite damping). */
const HERTZ_REFERENCE_MAX_TIME = 1e3;

/**
 * Restitution of the clamped Hertz contact with Tsuji-type damping F = k_H δ^{3/2} + η δ^{1/4} δ̇,
 * as a function of the dimensionless damping β = η / √(m_eff·k_H). Scaling δ by
 * (m_eff v²/k_H)^{2/5} and time by that length over v turns the equation of motion into
 * x'' = −x^{3/2} − β x^{1/4} x', x(0) = 0, x'(0) = 1, free of the impact speed — hence e does not
 * depend on speed. Integrated with classical RK4 until the force returns to zero; e = −x' there.
 */
export function hertzRestitutionForDimensionlessDamping(dimensionlessDamping: number): number {
  const beta = dimensionlessDamping;
  if (beta <= 0) return 1;
  const cached = hertzRestitutionCache.get(beta);
  if (cached !== undefined) return cached;
  const restitution = integrateHertzRestitution(beta, HERTZ_REFERENCE_STEP);
  rememberConversion(hertzRestitutionCache, beta, restitution);
  return restitution;
}

/**
 * Restitution of the Tsuji-damped Hertz contact when it ends as the overlap returns to zero and the
 * force may pull meanwhile (no clamp; Luding 2008's criterion, which an engine that does not clamp
 * its contact force follows): the same dimensionless integration, ended where x = 0 instead.
 */
export function hertzRestitutionOverlapCriterion(dimensionlessDamping: number): number {
  return dimensionlessDamping <= 0 ? 1 : integrateHertzRestitution(dimensionlessDamping, HERTZ_REFERENCE_STEP, true);
}

/** β giving restitution e for the unclamped Hertz contact ending at zero overlap (Illinois on β, then cached). */
export function hertzDimensionlessDampingOverlapCriterion(restitution: number): number {
  return cachedConversion(hertzOverlapDampingCache, restitution, (target) => solveIllinois((value) => hertzRestitutionOverlapCriterion(value) - target, 1 - target));
}

/**
 * Root of a decreasing g(β) with g(0) = gZero > 0 by the Illinois method (modified regula falsi):
 * bracketing like bisection but superlinear, about ten evaluations to 1e-13.
 */
function solveIllinois(g: (beta: number) => number, gZero: number): number {
  let low = 0;
  let high = 0.5;
  let gLow = gZero;
  let gHigh = g(high);
  while (gHigh > 0) {
    low = high;
    gLow = gHigh;
    high *= 2;
    gHigh = g(high);
  }
  return illinoisSteps(g, low, gLow, high, gHigh);
}

/**
 * The Illinois iteration on a bracket [low, high] of a decreasing g (g(low) = gLow > 0 ≥ gHigh =
 * g(high)): the regula falsi point, with the stale end's value halved when the same end moves twice.
 */
function illinoisSteps(g: (beta: number) => number, low: number, gLow: number, high: number, gHigh: number): number {
  let side = 0;
  let beta = high;
  for (let iteration = 0; iteration < 100; iteration++) {
    beta = (low * gHigh - high * gLow) / (gHigh - gLow);
    const gBeta = g(beta);
    if (Math.abs(gBeta) < 1e-13 || high - low < 1e-13 * high) break;
    if (gBeta > 0) {
      low = beta;
      gLow = gBeta;
      if (side === -1) gHigh *= 0.5;
      side = -1;
    } else {
      high = beta;
      gHigh = gBeta;
      if (side === 1) gLow *= 0.5;
      side = 1;
    }
  }
  return beta;
}

const hertzOverlapDampingCache = new Map<number, number>();

function integrateHertzRestitution(beta: number, h: number, endAtZeroOverlap = false): number {
  // Series solution near t = 0: x'' ≈ −β t^{1/4} ⇒ x' ≈ 1 − (4/5)β t^{5/4}, x ≈ t − (16/45)β t^{9/4}.
  const t0 = HERTZ_REFERENCE_START;
  let position = t0 - (16 / 45) * beta * Math.pow(t0, 2.25);
  let velocity = 1 - 0.8 * beta * Math.pow(t0, 1.25);
  let force = hertzDimensionlessForce(position, velocity, beta);
  let time = t0;
  let restitution = 0;
  while (time < HERTZ_REFERENCE_MAX_TIME) {
    const k1x = velocity;
    const k1v = -hertzDimensionlessForce(position, velocity, beta);
    const k2x = velocity + 0.5 * h * k1v;
    const k2v = -hertzDimensionlessForce(position + 0.5 * h * k1x, k2x, beta);
    const k3x = velocity + 0.5 * h * k2v;
    const k3v = -hertzDimensionlessForce(position + 0.5 * h * k2x, k3x, beta);
    const k4x = velocity + h * k3v;
    const k4v = -hertzDimensionlessForce(position + h * k3x, k4x, beta);
    const nextPosition = position + (h / 6) * (k1x + 2 * k2x + 2 * k3x + k4x);
    const nextVelocity = velocity + (h / 6) * (k1v + 2 * k2v + 2 * k3v + k4v);
    const nextForce = hertzDimensionlessForce(nextPosition, nextVelocity, beta);
    if (endAtZeroOverlap) {
      if (nextPosition <= 0) {
        // Linear interpolation of the velocity at the zero crossing of the overlap (smooth there).
        const fraction = position / (position - nextPosition);
        restitution = -(velocity + fraction * (nextVelocity - velocity));
        break;
      }
    } else if (nextForce <= 0 || nextPosition <= 0) {
      // Linear interpolation of the velocity at the zero crossing of the force.
      const fraction = force / (force - nextForce);
      restitution = -(velocity + fraction * (nextVelocity - velocity));
      break;
    }
    position = nextPosition;
    velocity = nextVelocity;
    force = nextForce;
    time += h;
  }
  return restitution;
}

/** Unclamped dimensionless Hertz force, sign-extended for x < 0 so zero crossings interpolate. */
function hertzDimensionlessForce(position: number, velocity: number, beta: number): number {
  const magnitude = Math.abs(position);
  const root = Math.sqrt(magnitude);
  const spring = position >= 0 ? magnitude * root : -magnitude * root;
  return spring + beta * Math.sqrt(root) * velocity;
}

/**
 * β = η/√(m_eff·k_H) giving restitution e for the clamped Tsuji-damped Hertz contact; solved once
 * per e (bisection on β, then cached).
 */
export function hertzDimensionlessDampingForRestitution(restitution: number): number {
  return cachedConversion(hertzDampingCache, restitution, solveHertzDimensionlessDamping);
}

function solveHertzDimensionlessDamping(restitution: number): number {
  let high = 0.5;
  while (hertzRestitutionForDimensionlessDamping(high) > restitution) high *= 2;
  // Illinois (modified regula falsi) on g(β) = e(β) − e_target over [0, high]: bracketing like
  // bisection, but superlinear, so each conversion costs about ten reference integrations. (The
  // bracket keeps low = 0, unlike solveIllinois: the stored conversions were made that way.)
  const g = (beta: number) => hertzRestitutionUncached(beta) - restitution;
  return illinoisSteps(g, 0, 1 - restitution, high, g(high));
}

function hertzRestitutionUncached(beta: number): number {
  const value = hertzRestitutionForDimensionlessDamping(beta);
  hertzRestitutionCache.delete(beta);
  return value;
}

/** Table of e(β) on u = β/(1+β) ∈ [0, 1], built on first use (a few tens of ms) for fast estimates. */
const ESTIMATE_TABLE_INTERVALS = 256;
/** Coarser than the reference step: RK4's error at this step stays below the interpolation error. */
const ESTIMATE_TABLE_STEP = 1e-3;
let estimateTable: Float64Array | null = null;

function hertzEstimateTable(): Float64Array {
  if (estimateTable !== null) return estimateTable;
  const table = new Float64Array(ESTIMATE_TABLE_INTERVALS + 1);
  for (let index = 0; index < ESTIMATE_TABLE_INTERVALS; index++) {
    const u = index / ESTIMATE_TABLE_INTERVALS;
    table[index] = integrateHertzRestitution(u / (1 - u), ESTIMATE_TABLE_STEP);
  }
  table[ESTIMATE_TABLE_INTERVALS] = 0; // e → 0 as β → ∞
  estimateTable = table;
  return table;
}

/**
 * e(β) of the clamped Tsuji-damped Hertz contact by cubic (Catmull–Rom) interpolation of a table
 * of the reference integration; agrees with `hertzRestitutionForDimensionlessDamping` to ~1e-6
 * (tested). Used for verdicts, where every cell of a damping sweep has its own β and running the
 * reference integration per cell would cost more than the cell itself.
 */
export function hertzRestitutionEstimate(dimensionlessDamping: number): number {
  if (!(dimensionlessDamping > 0)) return 1;
  const table = hertzEstimateTable();
  const position = (dimensionlessDamping / (1 + dimensionlessDamping)) * ESTIMATE_TABLE_INTERVALS;
  const index = Math.min(ESTIMATE_TABLE_INTERVALS - 1, Math.floor(position));
  const t = position - index;
  const p0 = index > 0 ? table[index - 1] : 2 * table[0] - table[1];
  const p1 = table[index];
  const p2 = table[index + 1];
  const p3 = index + 2 <= ESTIMATE_TABLE_INTERVALS ? table[index + 2] : 2 * table[ESTIMATE_TABLE_INTERVALS] - table[ESTIMATE_TABLE_INTERVALS - 1];
  return p1 + 0.5 * t * (p2 - p0 + t * (2 * p0 - 5 * p1 + 4 * p2 - p3 + t * (3 * (p1 - p2) + p3 - p0)));
}

/**
 * The damping of a target restitution under both contact-end criteria, for exports a game engine
 * reads: `forceZero` where the clamped force returns to zero (what Kickdrift's engine does; linear:
 * Schwager & Pöschel 2007), `overlapZero` where the overlap returns to zero and the force may pull
 * meanwhile (an engine that does not clamp; linear: Luding 2008, ζ = −ln e/√(π² + ln² e)). Linear
 * gives the damping ratio ζ (c = 2ζ√(m*·k)); Hertz the dimensionless β (η = β√(m*·k_H), force
 * η·δ^{1/4}·δ̇). The two differ by 4.9 % at e = 0.8 and by more as e falls.
 */
export type CriterionDamping = { dampingRatio: number } | { beta: number };

export interface RestitutionDamping {
  model: "linear" | "hertz";
  restitution: number;
  forceZero: CriterionDamping;
  overlapZero: CriterionDamping;
}

export function restitutionDamping(model: "linear" | "hertz", restitution: number): RestitutionDamping {
  if (model === "linear") {
    return { model, restitution, forceZero: { dampingRatio: linearDampingRatioForRestitution(restitution) }, overlapZero: { dampingRatio: restitution === 1 ? 0 : linearDampingRatioOverlapCriterion(restitution) } };
  }
  return { model, restitution, forceZero: { beta: hertzDimensionlessDampingForRestitution(restitution) }, overlapZero: { beta: hertzDimensionlessDampingOverlapCriterion(restitution) } };
}
