/**
 * From a scenario's contact spec to the engine's contact field: the field's parameters (effective
 * moduli, damping mode, the tangential law, broad phase) and the restitution the model promises,
 * which the verdicts compare the measured rebound with.
 */
import type { RunOptions, Scenario } from "./types";
import { DEFAULT_TANGENTIAL_STIFFNESS_RATIO, MAX_BODIES_FOR_FREE_FLIGHT_JUMPS } from "./constants";
import type { TangentialParameters } from "./tangential";
import type { Bodies } from "./bodies";
import {
  BROAD_PHASE_ALL_PAIRS,
  BROAD_PHASE_GRID,
  CONTACT_HERTZ,
  CONTACT_LINEAR,
  ContactField,
  DAMPING_COEFFICIENT,
  DAMPING_DIMENSIONLESS,
  DAMPING_NONE,
  SKIPPED_CONTACT_DEPTH_FRACTION,
  type ContactFieldParameters,
  type Wall,
} from "./contact-field";
import { hertzDimensionlessDampingForRestitution, hertzRestitutionEstimate, linearDampingRatioForRestitution } from "./damping";
import { effectiveModulusRigidWallPa, effectiveModulusSameMaterialPa, linearRestitutionForDampingRatio } from "./analytic";

/** The contact force field's parameters for a scenario (its contact law, damping, friction, walls, broad phase). */
export function contactFieldParameters(
  scenario: Scenario,
  walls: readonly Wall[],
  gravityMPerS2: number,
  bodyCount: number,
  broadPhase?: RunOptions["broadPhase"],
): ContactFieldParameters {
  const contact = scenario.contact;
  const isHertz = contact.model === "hertz";
  let hertzModulusFactorPa = 0;
  let wallHertzModulusFactorPa = 0;
  if (isHertz && contact.material) {
    // Discs of one material (1/E* = 2(1 − ν²)/E); walls of it too, or rigid (1/E* = (1 − ν²)/E, twice the E*).
    hertzModulusFactorPa = (4 / 3) * effectiveModulusSameMaterialPa(contact.material.youngsModulusPa, contact.material.poissonRatio);
    wallHertzModulusFactorPa = contact.wall === "rigid" ? (4 / 3) * effectiveModulusRigidWallPa(contact.material.youngsModulusPa, contact.material.poissonRatio) : hertzModulusFactorPa;
  }
  let dampingMode: typeof DAMPING_NONE | typeof DAMPING_COEFFICIENT | typeof DAMPING_DIMENSIONLESS = DAMPING_NONE;
  let dampingValue = 0;
  const damping = contact.damping;
  if (damping.kind === "coefficient" && damping.value > 0) {
    dampingMode = DAMPING_COEFFICIENT;
    dampingValue = damping.value;
  } else if (damping.kind === "restitution" && damping.value < 1) {
    dampingMode = DAMPING_DIMENSIONLESS;
    dampingValue = isHertz ? hertzDimensionlessDampingForRestitution(damping.value) : linearDampingRatioForRestitution(damping.value);
  }
  const friction = contact.friction;
  const rollingResistance = contact.rollingResistance ?? 0;
  let tangential: TangentialParameters | undefined;
  if ((friction !== undefined && (friction.coefficient > 0 || (friction.staticCoefficient ?? 0) > 0)) || rollingResistance > 0) {
    const coefficient = friction?.coefficient ?? 0;
    tangential = {
      coefficient,
      staticCoefficient: friction?.staticCoefficient ?? coefficient,
      stiffnessRatio: friction?.stiffnessRatio ?? DEFAULT_TANGENTIAL_STIFFNESS_RATIO,
      stiffnessNPerM: friction?.stiffness ?? 0,
      dampingRatio: friction?.dampingRatio ?? 0,
      rollingResistance,
    };
  }
  const useGrid = broadPhase === undefined ? scenario.scene.kind === "box" || bodyCount > MAX_BODIES_FOR_FREE_FLIGHT_JUMPS : broadPhase === "grid";
  return {
    model: isHertz ? CONTACT_HERTZ : CONTACT_LINEAR,
    stiffness: contact.stiffness ?? 0,
    hertzModulusFactorPa,
    wallHertzModulusFactorPa,
    dampingMode,
    dampingValue,
    walls,
    gravityMPerS2,
    broadPhase: useGrid ? BROAD_PHASE_GRID : BROAD_PHASE_ALL_PAIRS,
    nearMissDepthFraction: (scenario.verdictRules ?? 1) >= 2 ? SKIPPED_CONTACT_DEPTH_FRACTION : 0,
    tangential,
  };
}

/** Builds the contact force field of a scenario (a new field; `simulate` may reconfigure its scratch's instead). */
export function createContactField(scenario: Scenario, walls: readonly Wall[], gravityMPerS2: number, bodyCount: number, broadPhase?: RunOptions["broadPhase"]): ContactField {
  return new ContactField(contactFieldParameters(scenario, walls, gravityMPerS2, bodyCount, broadPhase));
}

/** Restitution the contact model should give the first contact's pair (1 when undamped). */
export function expectedRestitution(field: ContactField, bodies: Bodies, scenario: Scenario): number {
  const damping = scenario.contact.damping;
  if (damping.kind === "restitution") return damping.value;
  if (field.dampingMode === DAMPING_NONE) return 1;
  const a = field.run.firstContactA;
  const b = field.run.firstContactB;
  const reducedMass = field.contactReducedMassKg(bodies, a, b);
  const stiffness = field.contactStiffness(bodies, a, b);
  if (field.model === CONTACT_LINEAR) {
    const ratio = field.dampingMode === DAMPING_DIMENSIONLESS ? field.dampingValue : field.dampingValue / (2 * Math.sqrt(reducedMass * stiffness));
    return linearRestitutionForDampingRatio(ratio);
  }
  const beta = field.dampingMode === DAMPING_DIMENSIONLESS ? field.dampingValue : field.dampingValue / Math.sqrt(reducedMass * stiffness);
  return hertzRestitutionEstimate(beta);
}
