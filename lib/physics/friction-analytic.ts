/**
 * Closed-form results for friction, rolling and resting contact: references for the tests and
 * overlays on the maps. SI units; κ = I/(m·r²) is the body's inertia factor (½ for a solid disc,
 * 1 for a thin ring).
 */

/** Inertia factor κ = I/(m·r²) of a solid disc (I = ½·m·r²). */
export const SOLID_DISC_INERTIA_FACTOR = 0.5;

/**
 * Effective tangential mass of one disc at its rim, m/(1 + m·r²/I) = m·κ/(1 + κ): the mass a
 * tangential force at the contact point accelerates (translation and spin together). A static
 * wall adds nothing; for a pair, 1/m_t = 1/m_t1 + 1/m_t2.
 */
export function tangentialEffectiveMassKg(massKg: number, inertiaFactor = SOLID_DISC_INERTIA_FACTOR): number {
  return (massKg * inertiaFactor) / (1 + inertiaFactor);
}

/** Effective tangential mass of two discs in contact (either may be Infinity for a static body). */
export function pairTangentialEffectiveMassKg(massOneKg: number, massTwoKg: number, inertiaFactorOne = SOLID_DISC_INERTIA_FACTOR, inertiaFactorTwo = SOLID_DISC_INERTIA_FACTOR): number {
  const one = Number.isFinite(massOneKg) ? 1 / tangentialEffectiveMassKg(massOneKg, inertiaFactorOne) : 0;
  const two = Number.isFinite(massTwoKg) ? 1 / tangentialEffectiveMassKg(massTwoKg, inertiaFactorTwo) : 0;
  return 1 / (one + two);
}

/** ω_t·h of the sticking tangential spring. */
export function tangentialOmegaH(tangentialStiffnessNPerM: number, tangentialMassKg: number, substepS: number): number {
  return Math.sqrt(tangentialStiffnessNPerM / tangentialMassKg) * substepS;
}

/**
 * Slope angle (degrees) above which a body on an incline slides at its contact. A body that
 * cannot roll (κ = Infinity: a crate, or a disc with rotation held) slides once tan θ > μ; a disc
 * that rolls needs only the friction m·g·sin θ·κ/(1 + κ) to roll without slipping, so it slips once
 * tan θ > μ·(1 + κ)/κ (3μ for a solid disc). Kleppner & Kolenkow, An Introduction to Mechanics,
 * 2nd ed. 2014, ch. 7 (rolling on an incline, the friction needed to roll without slipping).
 */
export function slidingAngleDeg(frictionCoefficient: number, inertiaFactor = Infinity): number {
  const factor = Number.isFinite(inertiaFactor) ? (1 + inertiaFactor) / inertiaFactor : 1;
  return (Math.atan(frictionCoefficient * factor) * 180) / Math.PI;
}

/** Acceleration down an incline of a disc rolling without slipping: g·sin θ/(1 + κ) (Kleppner & Kolenkow 2014, ch. 7). */
export function rollingAccelerationMPerS2(angleDeg: number, gravityMPerS2: number, inertiaFactor = SOLID_DISC_INERTIA_FACTOR): number {
  return (gravityMPerS2 * Math.sin((angleDeg * Math.PI) / 180)) / (1 + inertiaFactor);
}

/**
 * Acceleration down an incline of a body sliding at its contact with dynamic coefficient μ:
 * g·(sin θ − μ·cos θ) (Kleppner & Kolenkow 2014, ch. 2, the block on an incline with friction);
 * the centre of a slipping disc accelerates the same. Negative: friction would hold it (it
 * decelerates to rest).
 */
export function slidingAccelerationMPerS2(angleDeg: number, gravityMPerS2: number, frictionCoefficient: number): number {
  const angleRad = (angleDeg * Math.PI) / 180;
  return gravityMPerS2 * (Math.sin(angleRad) - frictionCoefficient * Math.cos(angleRad));
}

/**
 * Static overlap of a body resting on the floor under its weight: m·g/k for the linear spring,
 * (m·g/k_H)^{2/3} for Hertz (force balance k·δ = m·g, k_H·δ^{3/2} = m·g).
 */
export function staticOverlapM(massKg: number, gravityMPerS2: number, stiffness: number, model: "linear" | "hertz" = "linear"): number {
  const weight = massKg * gravityMPerS2;
  return model === "linear" ? weight / stiffness : Math.pow(weight / stiffness, 2 / 3);
}

/**
 * A disc sliding on a level floor with speed v0 and spin ω0 (ω0·r in the rolling sense, so
 * ω0·r = v0 is already rolling) slows under kinetic friction μ·m·g while friction spins it up,
 * until its contact point stops slipping. Then it rolls at v* = (v0 + κ·ω0·r)/(1 + κ) (angular
 * momentum about the contact point is conserved), reached after t* = |v0 − ω0·r|·κ/(μ·g·(1 + κ)).
 * Solid disc from rest in spin: v* = 2v0/3, t* = v0/(3μg). Kleppner & Kolenkow 2014, ch. 7 (the
 * bowling ball that starts sliding; from memory for the problem's place in the chapter).
 */
export function slideToRoll(speedMPerS: number, spinTimesRadiusMPerS: number, frictionCoefficient: number, gravityMPerS2: number, inertiaFactor = SOLID_DISC_INERTIA_FACTOR): { rollingSpeedMPerS: number; timeS: number } {
  const rollingSpeedMPerS = (speedMPerS + inertiaFactor * spinTimesRadiusMPerS) / (1 + inertiaFactor);
  const timeS = (Math.abs(speedMPerS - spinTimesRadiusMPerS) * inertiaFactor) / (frictionCoefficient * gravityMPerS2 * (1 + inertiaFactor));
  return { rollingSpeedMPerS, timeS };
}

/**
 * Rebound of a disc from a static wall in gross sliding (the contact slides throughout): the
 * tangential impulse is μ times the normal impulse m·v_n·(1 + e) (Coulomb's law over the impulse),
 * so v_t' = v_t − μ·(1 + e)·v_n and the spin changes by μ·(1 + e)·v_n/(κ·r) in the rolling sense.
 * Holds while the slip does not stop during the impact, i.e. while
 * |v_t − ω·r| ≥ μ·(1 + e)·v_n·(1 + κ)/κ (Maw, Barber & Fawcett 1976, Wear 38, rigid-body limit;
 * the gross-sliding branch of Chung & Ooi 2011, Granular Matter 13, tests 3 and 4).
 * Signs: v_t > 0 along the wall, spin ω·r > 0 rolls with v_t (the contact point then slips by v_t − ω·r).
 */
export function grossSlidingRebound(
  normalSpeedMPerS: number,
  tangentialSpeedMPerS: number,
  spinTimesRadiusMPerS: number,
  frictionCoefficient: number,
  restitution: number,
  inertiaFactor = SOLID_DISC_INERTIA_FACTOR,
): { tangentialSpeedMPerS: number; spinTimesRadiusMPerS: number; grossSliding: boolean } {
  const impulsePerMass = frictionCoefficient * (1 + restitution) * normalSpeedMPerS;
  const slip = tangentialSpeedMPerS - spinTimesRadiusMPerS;
  const direction = slip >= 0 ? 1 : -1;
  return {
    tangentialSpeedMPerS: tangentialSpeedMPerS - direction * impulsePerMass,
    spinTimesRadiusMPerS: spinTimesRadiusMPerS + (direction * impulsePerMass) / inertiaFactor,
    grossSliding: Math.abs(slip) >= (impulsePerMass * (1 + inertiaFactor)) / inertiaFactor,
  };
}
