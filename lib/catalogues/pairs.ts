/**
 * The pairs of a catalogue check and the phase its recommendations allow: what both the normal
 * check (check.ts) and the friction rows (friction-check.ts) start from.
 *
 * Pure: safe to import in the browser.
 */
import { hertzMaxOverlapM, linearAngularFrequencyRadPerS, reducedMassKg } from "../physics/analytic";
import type { CheckSettings } from "./check";
import type { CatalogueObject } from "./format";

export class CheckInputError extends Error {
  constructor(
    readonly field: string,
    message: string,
  ) {
    super(message);
    this.name = "CheckInputError";
  }
}

export interface CataloguePair {
  /** "crate × coin": the scene.pair value of its cells. */
  name: string;
  a: CatalogueObject;
  b: CatalogueObject;
  /** Indices of a and b in the catalogue. */
  i: number;
  j: number;
  reducedMassKg: number;
  closingSpeedMPerS: number;
  stiffness: number;
  restitution: number;
}

export function pairName(a: CatalogueObject, b: CatalogueObject): string {
  return `${a.name} × ${b.name}`;
}

/** The stiffness of one object under the settings; throws when neither a group nor a single stiffness gives one. */
function objectStiffness(object: CatalogueObject, settings: CheckSettings): number {
  // Own properties only: a group named "constructor" or "toString" must not read Object.prototype.
  const groups = settings.groupStiffness;
  const fromGroup = object.group !== null && groups !== undefined && Object.hasOwn(groups, object.group) ? groups[object.group] : undefined;
  const value = fromGroup ?? settings.stiffness;
  if (value === undefined) {
    throw new CheckInputError(
      object.group !== null ? `groupStiffness.${object.group}` : "stiffness",
      object.group !== null ? `no stiffness for group "${object.group}" (object "${object.name}"): add it to groupStiffness or give stiffness` : `object "${object.name}" has no group: give stiffness for objects without one`,
    );
  }
  return value;
}

/** Every unordered pair of objects, each object with itself included, in catalogue order (i ≤ j). */
export function cataloguePairs(objects: readonly CatalogueObject[], settings: CheckSettings): CataloguePair[] {
  if (settings.stiffness === undefined && settings.groupStiffness === undefined) throw new CheckInputError("stiffness", "give stiffness, or groupStiffness for every group");
  const stiffness = objects.map((object) => objectStiffness(object, settings));
  const pairs: CataloguePair[] = [];
  for (let i = 0; i < objects.length; i++) {
    for (let j = i; j < objects.length; j++) {
      const a = objects[i];
      const b = objects[j];
      const ka = stiffness[i];
      const kb = stiffness[j];
      pairs.push({
        name: pairName(a, b),
        a,
        b,
        i,
        j,
        reducedMassKg: reducedMassKg(a.massKg, b.massKg),
        closingSpeedMPerS: a.topSpeedMPerS + b.topSpeedMPerS,
        // Harmonic mean: two springs in series, scaled so that a group meeting itself keeps its own stiffness.
        stiffness: ka === kb ? ka : (2 * ka * kb) / (ka + kb),
        restitution: Math.min(a.restitution, b.restitution),
      });
    }
  }
  return pairs;
}

/** Phase per substep the recommendations allow: ω·h ≤ 2·(1 − margin). */
export function allowedPhase(margin: number): number {
  return 2 * (1 - margin);
}

/**
 * Angular frequency of a pair's contact: linear √(k/m*); Hertz linearised at the deepest overlap of
 * a hit at the pair's closing speed, k_eff = dF/dδ = (3/2)·k_H·√δ_max.
 */
export function pairOmegaRadPerS(pair: Pick<CataloguePair, "stiffness" | "reducedMassKg" | "closingSpeedMPerS">, contactModel: CheckSettings["contactModel"]): number {
  if (contactModel === "linear") return linearAngularFrequencyRadPerS(pair.stiffness, pair.reducedMassKg);
  const overlapM = hertzMaxOverlapM(pair.stiffness, pair.reducedMassKg, pair.closingSpeedMPerS);
  return Math.sqrt((1.5 * pair.stiffness * Math.sqrt(overlapM)) / pair.reducedMassKg);
}
