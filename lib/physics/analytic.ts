/**
 * Closed-form results for one contact, used by the tests as references and drawn over stability
 * maps. SI units throughout; `mEffKg` is the reduced mass of the contacting pair (the body's own
 * mass against a static wall).
 */

/** Reduced mass m1·m2/(m1+m2); a static wall is `Infinity` and gives m1. */
export function reducedMassKg(massOneKg: number, massTwoKg: number): number {
  if (!Number.isFinite(massTwoKg)) return massOneKg;
  if (!Number.isFinite(massOneKg)) return massTwoKg;
  return (massOneKg * massTwoKg) / (massOneKg + massTwoKg);
}

/** Effective radius R1·R2/(R1+R2); a wall (`Infinity`) gives R1. */
export function effectiveRadiusM(radiusOneM: number, radiusTwoM: number): number {
  if (!Number.isFinite(radiusTwoM)) return radiusOneM;
  if (!Number.isFinite(radiusOneM)) return radiusTwoM;
  return (radiusOneM * radiusTwoM) / (radiusOneM + radiusTwoM);
}

/** Undamped angular frequency ω0 = √(k/m_eff) of the linear contact spring. */
export function linearAngularFrequencyRadPerS(stiffnessNPerM: number, mEffKg: number): number {
  return Math.sqrt(stiffnessNPerM / mEffKg);
}

/** Damping ratio ζ = c / (2√(m_eff·k)) of the linear spring–dashpot. */
export function linearDampingRatio(dampingNsPerM: number, stiffnessNPerM: number, mEffKg: number): number {
  return dampingNsPerM / (2 * Math.sqrt(mEffKg * stiffnessNPerM));
}

/** Dashpot coefficient c = 2ζ√(m_eff·k) for a damping ratio ζ. */
export function linearDampingCoefficientNsPerM(dampingRatio: number, stiffnessNPerM: number, mEffKg: number): number {
  return 2 * dampingRatio * Math.sqrt(mEffKg * stiffnessNPerM);
}

/**
 * Contact duration of the linear spring–dashpot when the contact ends as the overlap returns to
 * zero and the force may pull (no clamp): π/√(ω0² − γ²) with γ = c/(2 m_eff) (Luding 2008,
 * Eur. J. Environ. Civ. Eng. 12, "Introduction to discrete element methods", t_c = π/ω).
 * Undamped this is π/ω0 and equals the duration the engine measures. Infinite when γ ≥ ω0.
 */
export function linearContactDurationS(stiffnessNPerM: number, mEffKg: number, dampingNsPerM = 0): number {
  const omega0Squared = stiffnessNPerM / mEffKg;
  const gamma = dampingNsPerM / (2 * mEffKg);
  const dampedSquared = omega0Squared - gamma * gamma;
  return dampedSquared > 0 ? Math.PI / Math.sqrt(dampedSquared) : Infinity;
}

/**
 * Contact duration of the linear spring–dashpot when the total force is clamped at ≥ 0, so the
 * contact ends when the force returns to zero (the engine's criterion). Derived from the exact
 * solution δ = (v/ω)e^{−γt}sin ωt with F = kδ + cδ̇ = 0; matches Schwager & Pöschel 2007,
 * Granular Matter 9, "Coefficient of restitution and linear–dashpot model revisited", eq. for t_c
 * in the three regimes γ < ω0/√2, ω0/√2 ≤ γ < ω0, γ > ω0.
 */
export function linearForceContactDurationS(stiffnessNPerM: number, mEffKg: number, dampingNsPerM = 0): number {
  const omega0 = Math.sqrt(stiffnessNPerM / mEffKg);
  return dimensionlessForceContactDuration(dampingNsPerM / (2 * mEffKg) / omega0) / omega0;
}

/** ω0·t_c for the force-ends criterion as a function of the damping ratio ζ = γ/ω0 (see above). */
export function dimensionlessForceContactDuration(dampingRatio: number): number {
  const zeta = dampingRatio;
  if (zeta <= 0) return Math.PI;
  if (zeta < 1) {
    const omega = Math.sqrt(1 - zeta * zeta);
    const denominator = omega * omega - zeta * zeta;
    // atan2 covers both the γ < ω0/√2 branch (π − arctan) and the ω0/√2 ≤ γ < ω0 branch (arctan).
    return Math.atan2(2 * zeta * omega, -denominator) / omega;
  }
  if (zeta === 1) return 2; // limit of both neighbouring branches
  const overdampedRate = Math.sqrt(zeta * zeta - 1);
  return Math.log((zeta + overdampedRate) / (zeta - overdampedRate)) / overdampedRate;
}

/**
 * Coefficient of restitution of the clamped linear spring–dashpot (contact ends when the force
 * returns to zero): e = exp(−γ·t_c) with t_c from `dimensionlessForceContactDuration`
 * (Schwager & Pöschel 2007, Granular Matter 9). Independent of impact speed.
 */
export function linearRestitutionForDampingRatio(dampingRatio: number): number {
  return Math.exp(-dampingRatio * dimensionlessForceContactDuration(dampingRatio));
}

/**
 * Restitution of the unclamped spring–dashpot whose contact ends when the overlap returns to
 * zero: e = exp(−ζπ/√(1−ζ²)) (Luding 2008, eq. for r). Given for comparison; the engine clamps.
 */
export function linearRestitutionOverlapCriterion(dampingRatio: number): number {
  if (dampingRatio >= 1) return 0;
  return Math.exp((-dampingRatio * Math.PI) / Math.sqrt(1 - dampingRatio * dampingRatio));
}

/** Inverse of `linearRestitutionOverlapCriterion`: ζ = −ln e / √(π² + ln² e). */
export function linearDampingRatioOverlapCriterion(restitution: number): number {
  const logE = Math.log(restitution);
  return -logE / Math.sqrt(Math.PI * Math.PI + logE * logE);
}

/**
 * Maximum overlap of the linear spring–dashpot hit at relative normal speed v. Undamped v/ω0;
 * damped (v/ω)e^{−γ t_m} sin ωt_m with t_m = atan2(ω, γ)/ω (Luding 2008, δ_max); critically and
 * over-damped from the corresponding exact solutions. The clamp never acts before δ_max, so this
 * is exact for the engine's model too.
 */
export function linearMaxOverlapM(stiffnessNPerM: number, mEffKg: number, speedMPerS: number, dampingNsPerM = 0): number {
  const omega0 = Math.sqrt(stiffnessNPerM / mEffKg);
  const gamma = dampingNsPerM / (2 * mEffKg);
  if (gamma === 0) return speedMPerS / omega0;
  if (gamma < omega0) {
    const omega = Math.sqrt(omega0 * omega0 - gamma * gamma);
    const timeOfMaxS = Math.atan2(omega, gamma) / omega;
    return (speedMPerS / omega) * Math.exp(-gamma * timeOfMaxS) * Math.sin(omega * timeOfMaxS);
  }
  if (gamma === omega0) return speedMPerS / (gamma * Math.E);
  const rate = Math.sqrt(gamma * gamma - omega0 * omega0);
  const timeOfMaxS = Math.log((gamma + rate) / (gamma - rate)) / (2 * rate);
  return (speedMPerS / (2 * rate)) * (Math.exp((rate - gamma) * timeOfMaxS) - Math.exp((-rate - gamma) * timeOfMaxS));
}

/** E* for two bodies of the same material: 1/E* = 2(1−ν²)/E (Johnson 1985, Contact Mechanics, §4.2). */
export function effectiveModulusSameMaterialPa(youngsModulusPa: number, poissonRatio: number): number {
  return youngsModulusPa / (2 * (1 - poissonRatio * poissonRatio));
}

/** E* of a body against a rigid (non-deforming) wall: 1/E* = (1−ν²)/E (Johnson 1985, Contact Mechanics, §4.2). */
export function effectiveModulusRigidWallPa(youngsModulusPa: number, poissonRatio: number): number {
  return youngsModulusPa / (1 - poissonRatio * poissonRatio);
}

/** Hertz stiffness k_H = (4/3)·E*·√R*, so F = k_H·δ^{3/2} (Johnson 1985, Contact Mechanics, §4.2). */
export function hertzStiffnessFromModulus(effectiveModulusPa: number, effectiveRadiusMeters: number): number {
  return (4 / 3) * effectiveModulusPa * Math.sqrt(effectiveRadiusMeters);
}

/**
 * ∫₀¹ (1 − x^{5/2})^{−1/2} dx = (2/5)·√π·Γ(2/5)/Γ(9/10), the shape integral of the Hertz impact
 * (the test re-derives it from mathjs' gamma function).
 */
export const HERTZ_SHAPE_INTEGRAL = 1.4716375921623523;

/**
 * Maximum overlap of an undamped Hertz impact: energy balance ½m*v² = (2/5)k_H δ^{5/2} gives
 * δ_max = (5m*v²/(4k_H))^{2/5}, i.e. (15m*v²/(16E*√R*))^{2/5} (Johnson 1985, Contact Mechanics, §11.1).
 */
export function hertzMaxOverlapM(hertzStiffness: number, mEffKg: number, speedMPerS: number): number {
  return Math.pow((5 * mEffKg * speedMPerS * speedMPerS) / (4 * hertzStiffness), 0.4);
}

/**
 * Duration of an undamped Hertz impact: t_c = 2·I·δ_max/v with I = HERTZ_SHAPE_INTEGRAL, i.e.
 * ≈ 2.868·(m*²/(R*E*²v))^{1/5} (Johnson 1985, Contact Mechanics, §11.1, constant 2.87).
 */
export function hertzContactDurationS(hertzStiffness: number, mEffKg: number, speedMPerS: number): number {
  return (2 * HERTZ_SHAPE_INTEGRAL * hertzMaxOverlapM(hertzStiffness, mEffKg, speedMPerS)) / speedMPerS;
}

/**
 * Largest stable (sub)step of symplectic Euler and velocity Verlet on a linear contact:
 * ω0·dt < 2 (Hairer, Lubich & Wanner 2006, Geometric Numerical Integration, the harmonic
 * oscillator; the step matrix has |trace| < 2). With substeps this bounds dtS/substeps.
 */
export function maxStableSubstepS(stiffnessNPerM: number, mEffKg: number): number {
  return 2 / Math.sqrt(stiffnessNPerM / mEffKg);
}

/**
 * Energy factor per step of explicit Euler on the harmonic oscillator: E_{n+1} = (1 + (ω·dt)²)·E_n
 * exactly, so explicit Euler gains energy at any step size.
 */
export function explicitEulerEnergyGrowthPerStep(angularFrequencyRadPerS: number, substepS: number): number {
  const phase = angularFrequencyRadPerS * substepS;
  return 1 + phase * phase;
}

/**
 * Tunnelling threshold for a pair. The relative motion crosses the contact zone on a chord; the
 * approaching half of that chord, before the centres reach their closest approach, has length
 * L = R·√(1 − f²) (R = sum of radii, f = impact offset fraction). The engine flags a tunnel when
 * a contact is skipped entirely or first seen already past the closest approach (for a head-on
 * pair: centres already crossed). Both are impossible while the relative displacement per substep
 * v·dt_sub is below L, and occur for some initial gaps once it exceeds L. Returns v* = L/dt_sub.
 */
export function pairTunnelingThresholdSpeedMPerS(sumOfRadiiM: number, substepS: number, offsetFraction = 0): number {
  return (sumOfRadiiM * Math.sqrt(1 - offsetFraction * offsetFraction)) / substepS;
}

/**
 * Tunnelling threshold for a disc and a wall: the centre must not reach the wall line within one
 * substep from outside the contact zone, so the normal speed must stay below r/dt_sub; returned
 * as the speed along the incoming direction (angle from the normal).
 */
export function wallTunnelingThresholdSpeedMPerS(radiusM: number, substepS: number, angleDeg = 0): number {
  return radiusM / substepS / Math.cos((angleDeg * Math.PI) / 180);
}
