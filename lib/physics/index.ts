/**
 * The collision engine: `simulate(scenario, options)` runs one cell; the analytic helpers give
 * the closed-form references drawn over stability maps.
 */
export * from "./types";
export { simulate, totalSubsteps, judge } from "./simulate";
export { DEFAULT_TOLERANCES, MAX_BOX_DISCS, SNAPSHOT_OVERLAP_TOLERANCE } from "./constants";
export { boxSceneProblem, boxLayout, snapshotOverlaps, describeSnapshotOverlap } from "./scenes";
export * from "./analytic";
export * from "./friction-analytic";
export {
  linearDampingRatioForRestitution,
  hertzDimensionlessDampingForRestitution,
  hertzRestitutionForDimensionlessDamping,
  hertzRestitutionEstimate,
} from "./damping";
export { Xoshiro128StarStar } from "./random";
export { WORK_UNITS_VERSION, WORK_UNIT_WEIGHTS, CONTACTS_CHARGED_PER_BODY, workUnitCeiling, wallCount, type WorkShape } from "./work-units";
