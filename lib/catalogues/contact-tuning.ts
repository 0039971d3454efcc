/**
 * A catalogue check in the form game engines take: every pairing's contact as natural frequency
 * and damping ratio for its reduced mass (at the check's stiffness and at the recommended one),
 * and the one "game settings" document (docs/game-settings.md, field by field).
 *
 * Kept apart from exports.ts so the check's own export documents can change without this.
 * Pure: safe to import in the browser.
 */
import "server-only";
import { linearDampingRatioForRestitution } from "../physics/damping";
import { linearDampingRatioOverlapCriterion } from "../physics/analytic";
import { CONTACT_END_CRITERION } from "../sweeps/envelope";
import { dampingForRatioNsPerM, naturalFrequencyHz, phasePerSubstep } from "../physics/frequency";
import type { ContactTuning } from "../sweeps/contact-tuning";
import { csvText } from "../csv";
import { formatNumber } from "../sweeps/results";
import { cataloguePairs, type CataloguePair, type CheckSettings, type Recommendation } from "./check";
import type { CatalogueObject } from "./format";

export interface PairContactTuning {
  pair: string;
  objectA: string;
  objectB: string;
  /** Contact at the stiffness the check ran with. */
  checked: ContactTuning;
  /** Contact at the recommended single stiffness; null when there is no recommendation. */
  recommended: ContactTuning | null;
}

function pairDampingRatio(pair: CataloguePair, settings: Pick<CheckSettings, "damping">): number {
  return settings.damping === "catalogue" && pair.restitution < 1 ? linearDampingRatioForRestitution(pair.restitution) : 0;
}

function tuning(stiffnessNPerM: number, mEffKg: number, dampingRatio: number, substepS: number): ContactTuning {
  const frequencyHz = naturalFrequencyHz(stiffnessNPerM, mEffKg);
  return {
    effectiveMassKg: mEffKg,
    stiffnessNPerM,
    dampingNsPerM: dampingForRatioNsPerM(dampingRatio, frequencyHz, mEffKg),
    frequencyHz,
    dampingRatio,
    phasePerSubstep: phasePerSubstep(frequencyHz, substepS),
  };
}

/**
 * Each pairing's contact, catalogue order. Linear model only: a Hertz check answers an empty list
 * (its frequency depends on the impact; see docs/game-settings.md).
 */
export function pairContactTuning(objects: readonly CatalogueObject[], settings: CheckSettings, recommendation: Pick<Recommendation, "stiffness">): PairContactTuning[] {
  if (settings.contactModel !== "linear") return [];
  const substepS = settings.dtS / settings.substeps;
  return cataloguePairs(objects, settings).map((pair) => {
    const zeta = pairDampingRatio(pair, settings);
    return {
      pair: pair.name,
      objectA: pair.a.name,
      objectB: pair.b.name,
      checked: tuning(pair.stiffness, pair.reducedMassKg, zeta, substepS),
      recommended: recommendation.stiffness === null ? null : tuning(recommendation.stiffness, pair.reducedMassKg, zeta, substepS),
    };
  });
}

export const GAME_SETTINGS_FORMAT = "kickdrift-game-settings";
/** 2: `contactEnd`, and each pair's damping for an engine whose contacts end at zero overlap (`overlapZero`). */
export const GAME_SETTINGS_VERSION = 2;

export interface GameSettingsPair {
  pair: string;
  objectA: string;
  objectB: string;
  effectiveMassKg: number;
  stiffnessNPerM: number;
  dampingNsPerM: number;
  frequencyHz: number;
  dampingRatio: number;
  restitution: number | null;
  /**
   * The damping that gives the same restitution in an engine whose contact ends where the overlap
   * returns to zero and whose force may pull meanwhile (no clamp): ζ = −ln e/√(π² + ln² e)
   * (Luding 2008), c = 2ζ√(k·m*). `dampingNsPerM`/`dampingRatio` above are for the force-zero
   * criterion (`contactEnd`), which Kickdrift's engine follows. Equal to them when undamped.
   */
  overlapZero: { dampingRatio: number; dampingNsPerM: number };
  worstVerdict: string | null;
}

export interface GameSettings {
  format: typeof GAME_SETTINGS_FORMAT;
  version: typeof GAME_SETTINGS_VERSION;
  source: { kind: "catalogue-check"; checkId: string; catalogue: string; catalogueVersion: number; stiffness: "checked" | "recommended" };
  frameRateHz: number;
  dtS: number;
  substeps: number;
  substepS: number;
  integrator: string;
  /** Where the engine ends a contact (and so which damping gives the restitution): "force-zero" (Schwager & Pöschel 2007). */
  contactEnd: typeof CONTACT_END_CRITERION;
  contact: {
    model: "linear";
    stiffnessNPerM: number;
    /** Frequency and damping of the lightest pairing (the one that limits the step). */
    frequencyHz: number;
    dampingRatio: number;
    effectiveMassKg: number;
    lightestPair: string;
  };
  pairs: GameSettingsPair[];
}

export class GameSettingsError extends Error {
  constructor(
    readonly field: string,
    message: string,
  ) {
    super(message);
    this.name = "GameSettingsError";
  }
}

/**
 * The game settings of a check: its frame rate, substeps and integrator, and the contact at the
 * stiffness chosen (`checked`: what the check ran; `recommended`: the recommended single
 * stiffness, which a confirming check should then verify).
 */
export function gameSettings(input: {
  checkId: string;
  catalogue: { name: string; version: number };
  objects: readonly CatalogueObject[];
  settings: CheckSettings;
  recommendation: Recommendation;
  worstVerdicts?: ReadonlyMap<string, string | null>;
  stiffness: "checked" | "recommended";
}): GameSettings {
  const { settings, recommendation } = input;
  if (settings.contactModel !== "linear") throw new GameSettingsError("settings.contactModel", "game settings are given for linear contacts only: a Hertz contact has no single frequency");
  if (input.stiffness === "recommended" && recommendation.stiffness === null) throw new GameSettingsError("stiffness", `there is no recommended stiffness: ${recommendation.stiffnessNote}`);
  const tuned = pairContactTuning(input.objects, settings, recommendation);
  const pairs = cataloguePairs(input.objects, settings);
  const pick = (entry: PairContactTuning) => (input.stiffness === "recommended" ? (entry.recommended as ContactTuning) : entry.checked);
  const out: GameSettingsPair[] = tuned.map((entry, n) => {
    const contact = pick(entry);
    const restitution = settings.damping === "catalogue" ? pairs[n].restitution : null;
    const overlapRatio = restitution !== null && restitution < 1 ? linearDampingRatioOverlapCriterion(restitution) : 0;
    return {
      pair: entry.pair,
      objectA: entry.objectA,
      objectB: entry.objectB,
      effectiveMassKg: contact.effectiveMassKg,
      stiffnessNPerM: contact.stiffnessNPerM,
      dampingNsPerM: contact.dampingNsPerM,
      frequencyHz: contact.frequencyHz,
      dampingRatio: contact.dampingRatio,
      restitution,
      overlapZero: { dampingRatio: overlapRatio, dampingNsPerM: 2 * overlapRatio * Math.sqrt(contact.stiffnessNPerM * contact.effectiveMassKg) },
      worstVerdict: input.worstVerdicts?.get(entry.pair) ?? null,
    };
  });
  const lightest = out.reduce((best, pair) => (pair.effectiveMassKg < best.effectiveMassKg ? pair : best), out[0]);
  return {
    format: GAME_SETTINGS_FORMAT,
    version: GAME_SETTINGS_VERSION,
    source: { kind: "catalogue-check", checkId: input.checkId, catalogue: input.catalogue.name, catalogueVersion: input.catalogue.version, stiffness: input.stiffness },
    frameRateHz: 1 / settings.dtS,
    dtS: settings.dtS,
    substeps: settings.substeps,
    substepS: settings.dtS / settings.substeps,
    integrator: settings.integrator,
    contactEnd: CONTACT_END_CRITERION,
    contact: {
      model: "linear",
      stiffnessNPerM: input.stiffness === "recommended" ? (recommendation.stiffness as number) : lightest.stiffnessNPerM,
      frequencyHz: lightest.frequencyHz,
      dampingRatio: lightest.dampingRatio,
      effectiveMassKg: lightest.effectiveMassKg,
      lightestPair: lightest.pair,
    },
    pairs: out,
  };
}

/** One row per pairing: the contact at the check's stiffness and at the recommended one, CRLF rows. */
export function pairContactCsv(tuned: readonly PairContactTuning[]): string {
  const cell = (value: number | null | undefined) => (value === null || value === undefined || !Number.isFinite(value) ? "" : formatNumber(value));
  const lines = [PAIR_CONTACT_CSV_COLUMNS.join(",")];
  for (const entry of tuned) {
    lines.push(
      [
        csvText(entry.pair),
        csvText(entry.objectA),
        csvText(entry.objectB),
        cell(entry.checked.effectiveMassKg),
        cell(entry.checked.stiffnessNPerM),
        cell(entry.checked.dampingNsPerM),
        cell(entry.checked.frequencyHz),
        cell(entry.checked.dampingRatio),
        cell(entry.recommended?.stiffnessNPerM),
        cell(entry.recommended?.dampingNsPerM),
        cell(entry.recommended?.frequencyHz),
      ].join(","),
    );
  }
  return `${lines.join("\r\n")}\r\n`;
}

export const PAIR_CONTACT_CSV_COLUMNS = [
  "pair",
  "object_a",
  "object_b",
  "effective_mass_kg",
  "stiffness_n_per_m",
  "damping_ns_per_m",
  "frequency_hz",
  "damping_ratio",
  "recommended_stiffness_n_per_m",
  "recommended_damping_ns_per_m",
  "recommended_frequency_hz",
] as const;
