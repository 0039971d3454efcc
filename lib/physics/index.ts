/**
 * The collision engine: `simulate(scenario, options)` runs one cell; the analytic helpers give
 * the closed-form references drawn over stability maps.
 */
export * from "./types";
export { simulate, totalSubsteps } from "./simulate";
export { judge } from "./verdicts";
export { DEFAULT_TOLERANCES } from "./constants";
export { boxSceneProblem, snapshotOverlaps } from "./scenes";
export * from "./analytic";
export * from "./friction-analytic";
export {
  linearDampingRatioForRestitution,
  hertzDimensionlessDampingForRestitution,
  hertzRestitutionForDimensionlessDamping,
  hertzRestitutionEstimate,
} from "./damping";
export { Xoshiro128StarStar } from "./random";
