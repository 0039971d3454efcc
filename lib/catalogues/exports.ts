/**
 * Exports of a check for a game's config: the pair matrix (one row per pair) and the
 * recommendation, as CSV and JSON. CSV text cells go through the results serialiser's formula
 * guard and RFC 4180 quoting (lib/sweeps/results.ts), so an object named "=cmd|…" is written as
 * text a spreadsheet will not run.
 *
 * Pure: safe to import in the browser.
 */
import "server-only";
import { VERDICTS } from "../physics/types";
import { CONTACT_END_CRITERION } from "../sweeps/envelope";
import { csvText } from "../csv";
import { formatNumber } from "../sweeps/results";
import { stiffnessUnit, type CheckSettings, type PairMatrix, type Recommendation } from "./check";
import type { PairContactTuning } from "./contact-tuning";

function text(value: string): string {
  return csvText(value);
}

function num(value: number | null): string {
  return value === null || !Number.isFinite(value) ? "" : formatNumber(value);
}

export const PAIR_CSV_COLUMNS = [
  "pair",
  "object_a",
  "object_b",
  "closing_speed_m_per_s",
  "stiffness",
  "worst_verdict",
  "highest_stable_speed_m_per_s",
  "bound_margin",
  "cells",
  ...VERDICTS.map((verdict) => `cells_${verdict.replace("-", "_")}`),
] as const;

/** One row per pair (catalogue order), CRLF line ends. */
export function pairMatrixCsv(matrix: PairMatrix): string {
  const lines = [PAIR_CSV_COLUMNS.join(",")];
  for (const pair of matrix.pairs) {
    lines.push(
      [
        text(pair.name),
        text(pair.a),
        text(pair.b),
        num(pair.closingSpeedMPerS),
        num(pair.stiffness),
        text(pair.worstVerdict ?? ""),
        num(pair.highestStableSpeedMPerS),
        num(pair.boundMargin),
        String(pair.cellsDone),
        ...VERDICTS.map((verdict) => String(pair.counts[verdict])),
      ].join(","),
    );
  }
  return `${lines.join("\r\n")}\r\n`;
}

/** The recommendation as setting,value,unit,note rows. */
export function recommendationCsv(settings: CheckSettings, recommendation: Recommendation): string {
  const rows: [string, number | string | null, string, string][] = [
    ["dt", settings.dtS, "s", "frame step of the check"],
    ["frame_rate", 1 / settings.dtS, "Hz", "1 / dt"],
    ["substeps", settings.substeps, "", "substeps of the check"],
    ["integrator", settings.integrator, "", ""],
    ["contact_model", settings.contactModel, "", ""],
    ["margin", recommendation.margin, "fraction", `share of the bound omega*h < 2 kept in reserve (${Number((recommendation.margin * 100).toPrecision(3))} % on screen)`],
    ["lightest_reduced_mass", recommendation.lightestReducedMassKg, "kg", recommendation.lightestPair],
    ["recommended_stiffness", recommendation.stiffness, settings.contactModel === "linear" ? "N/m" : "N/m^1.5", recommendation.stiffnessNote],
    ["recommended_substeps", recommendation.substeps, "", recommendation.substepsNote],
    ["advice", recommendation.advice.kind, "", recommendation.advice.summary],
    ...recommendation.advice.details.map((detail): [string, null, string, string] => ["advice_detail", null, "", detail]),
    ["advised_substeps", recommendation.advice.settings?.substeps ?? null, "", "substeps of the advised settings"],
    ["advised_stiffness", recommendation.advice.settings?.stiffness ?? null, stiffnessUnit(settings.contactModel), "the stiffest in the advised range"],
    ["advised_stiffness_min", recommendation.advice.settings?.stiffnessMin ?? null, stiffnessUnit(settings.contactModel), "floor: every pair within the overlap tolerance"],
    ["advised_stiffness_max", recommendation.advice.settings?.stiffnessMax ?? null, stiffnessUnit(settings.contactModel), "cap: every pair within omega*h <= 2(1 - margin)"],
  ];
  const friction = recommendation.friction;
  if (friction) {
    // Only for catalogues whose objects give μ or μ_r: older catalogues export exactly the rows above.
    rows.push(
      ["friction_stiffness_ratio", friction.stiffnessRatio, "k_t/k", friction.stiffnessRatioGiven ? "the check's tangential stiffness ratio" : "not given: the engine's default 2/7"],
      ["friction_largest_stiffness_ratio", friction.largestStiffnessRatio, "k_t/k", friction.largestStiffnessRatioContact ? `largest keeping every tangential spring within omega_t*h <= 2(1 - margin); ${friction.largestStiffnessRatioContact} decides` : "no contact has a friction coefficient"],
      ["friction_tangential_substeps", friction.tangentialSubsteps, "", "smallest substeps keeping every tangential spring within the margin at friction_stiffness_ratio"],
      ["friction_substeps", friction.substeps, "", "smallest substeps keeping every pair stable (tangential and normal springs)"],
      ["gravity", friction.gravityMPerS2, "m/s^2", "for resting overlap and sliding"],
      ["slope_angle", friction.slopeAngleDeg, "deg", "the game's steepest slope"],
      ["friction_advice", null, "", friction.summary],
      ...friction.details.map((detail): [string, null, string, string] => ["friction_detail", null, "", detail]),
    );
  }
  const lines = ["setting,value,unit,note"];
  for (const [name, value, unit, note] of rows) lines.push([text(name), typeof value === "string" ? text(value) : num(value), text(unit), text(note)].join(","));
  return `${lines.join("\r\n")}\r\n`;
}

export const FRICTION_CSV_COLUMNS = [
  "contact",
  "kind",
  "object_a",
  "object_b",
  "friction",
  "rolling_resistance",
  "stiffness",
  "tangential_stiffness_n_per_m",
  "tangential_mass_kg",
  "tangential_omega_h",
  "tangential_stable",
  "largest_stiffness_ratio",
  "resting_overlap_m",
  "allowed_resting_overlap_m",
  "resting_within_tolerance",
  "sliding_angle_deg",
  "rolling_slip_angle_deg",
  "holds_on_slope",
  "slide_time_s",
  "slide_distance_m",
  "rolling_speed_m_per_s",
  "rolling_distance_m",
] as const;

function flag(value: boolean | null): string {
  return value === null ? "" : value ? "yes" : "no";
}

/** The friction rows of a check (catalogue pairs, then objects on the floor), CRLF line ends; null when no object gives μ or μ_r. */
export function frictionCsv(recommendation: Recommendation): string | null {
  const friction = recommendation.friction;
  if (!friction) return null;
  const lines = [FRICTION_CSV_COLUMNS.join(",")];
  for (const row of friction.contacts) {
    lines.push(
      [
        text(row.contact),
        row.kind,
        text(row.objectA),
        text(row.objectB ?? ""),
        num(row.frictionCoefficient),
        num(row.rollingResistance),
        num(row.stiffness),
        num(row.tangentialStiffnessNPerM),
        num(row.tangentialMassKg),
        num(row.tangentialOmegaH),
        flag(row.frictionCoefficient !== null && row.frictionCoefficient > 0 ? row.tangentialStable : null),
        num(row.largestStiffnessRatio),
        num(row.restingOverlapM),
        num(row.allowedRestingOverlapM),
        flag(row.restingWithinTolerance),
        num(row.slidingAngleDeg),
        num(row.rollingSlipAngleDeg),
        flag(row.holdsOnSlope),
        num(row.slideTimeS),
        num(row.slideDistanceM),
        num(row.rollingSpeedMPerS),
        num(row.rollingDistanceM),
      ].join(","),
    );
  }
  return `${lines.join("\r\n")}\r\n`;
}

/** Everything a game's config needs, as one JSON document. */
export function checkExportJson(input: { checkId: string; catalogue: { name: string; version: number; contentHash: string }; settings: CheckSettings; matrix: PairMatrix; recommendation: Recommendation; contacts?: readonly PairContactTuning[] }): string {
  const { matrix } = input;
  return `${JSON.stringify(
    {
      format: "kickdrift-catalogue-check",
      version: 1,
      // Where the engine ends a contact, so which damping the restitutions convert to (game settings give both).
      contactEnd: CONTACT_END_CRITERION,
      checkId: input.checkId,
      catalogue: input.catalogue,
      settings: input.settings,
      complete: matrix.complete,
      pairsAtRisk: matrix.atRisk,
      pairs: matrix.pairs.map((pair) => ({
        pair: pair.name,
        objectA: pair.a,
        objectB: pair.b,
        closingSpeedMPerS: pair.closingSpeedMPerS,
        stiffness: pair.stiffness,
        worstVerdict: pair.worstVerdict,
        highestStableSpeedMPerS: pair.highestStableSpeedMPerS,
        boundMargin: Number.isFinite(pair.boundMargin) ? pair.boundMargin : null,
        counts: pair.counts,
      })),
      recommendation: input.recommendation,
      ...(input.contacts ? { contacts: input.contacts } : {}),
    },
    null,
    2,
  )}\n`;
}
