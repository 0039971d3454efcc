/**
 * The (natural frequency, damping ratio) form of a linear spring–dashpot contact, for the pairing's
 * effective mass m: the form soft-constraint solvers of game engines are tuned with. Definitions of
 * the single-degree-of-freedom oscillator m·ẍ + c·ẋ + k·x = 0 (Rao, Mechanical Vibrations, 2011):
 *
 *   ω_n = √(k/m)            undamped natural angular frequency (rad/s)
 *   f_n = ω_n / (2π)        natural frequency (Hz)
 *   c_c = 2·m·ω_n = 2√(k·m) critical damping coefficient
 *   ζ   = c / c_c           damping ratio
 *
 * and back: k = m·(2π·f_n)², c = 2·ζ·m·ω_n. Pure numerics, SI units, no allocation.
 */

const TWO_PI = 2 * Math.PI;

/** f_n = √(k/m)/(2π) in Hz. */
export function naturalFrequencyHz(stiffnessNPerM: number, mEffKg: number): number {
  return Math.sqrt(stiffnessNPerM / mEffKg) / TWO_PI;
}

/** k = m·(2π·f_n)² in N/m. */
export function stiffnessForNaturalFrequencyNPerM(frequencyHz: number, mEffKg: number): number {
  const omega = TWO_PI * frequencyHz;
  return mEffKg * omega * omega;
}

/** Critical damping coefficient c_c = 2√(k·m) in N·s/m. */
export function criticalDampingNsPerM(stiffnessNPerM: number, mEffKg: number): number {
  return 2 * Math.sqrt(stiffnessNPerM * mEffKg);
}

/** ζ = c / c_c. */
export function dampingRatioOf(dampingNsPerM: number, stiffnessNPerM: number, mEffKg: number): number {
  return dampingNsPerM / criticalDampingNsPerM(stiffnessNPerM, mEffKg);
}

/** c = ζ·c_c = 2·ζ·m·ω_n, given the natural frequency (Hz). */
export function dampingForRatioNsPerM(dampingRatio: number, frequencyHz: number, mEffKg: number): number {
  return 2 * dampingRatio * mEffKg * TWO_PI * frequencyHz;
}

export interface SpringDashpot {
  stiffnessNPerM: number;
  dampingNsPerM: number;
}

export interface FrequencyForm {
  frequencyHz: number;
  dampingRatio: number;
}

/** (k, c) → (f_n, ζ) for the effective mass; writes into `out` and returns it. */
export function toFrequencyForm(stiffnessNPerM: number, dampingNsPerM: number, mEffKg: number, out: FrequencyForm = { frequencyHz: 0, dampingRatio: 0 }): FrequencyForm {
  out.frequencyHz = naturalFrequencyHz(stiffnessNPerM, mEffKg);
  out.dampingRatio = dampingRatioOf(dampingNsPerM, stiffnessNPerM, mEffKg);
  return out;
}

/** (f_n, ζ) → (k, c) for the effective mass; writes into `out` and returns it. */
export function toSpringDashpot(frequencyHz: number, dampingRatio: number, mEffKg: number, out: SpringDashpot = { stiffnessNPerM: 0, dampingNsPerM: 0 }): SpringDashpot {
  out.stiffnessNPerM = stiffnessForNaturalFrequencyNPerM(frequencyHz, mEffKg);
  out.dampingNsPerM = dampingForRatioNsPerM(dampingRatio, frequencyHz, mEffKg);
  return out;
}

/**
 * Natural frequency per substep as a phase: ω_n·h = 2π·f_n·h. Symplectic Euler and velocity Verlet
 * on the undamped spring are stable for ω_n·h < 2, i.e. f_n < 1/(π·h); a soft-constraint solver's
 * frequency is often quoted against the substep rate, so the export gives both.
 */
export function phasePerSubstep(frequencyHz: number, substepS: number): number {
  return TWO_PI * frequencyHz * substepS;
}
