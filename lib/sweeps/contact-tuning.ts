/**
 * Each contact of a cell, envelope row or catalogue pair in the form soft-constraint solvers are
 * tuned with: natural frequency (Hz) and damping ratio for the pairing's effective mass, beside
 * k, c and dt. Kept apart from the envelope and the check exports so those can change their
 * documents without touching this; they call `withContactTuning` / `pairContactTuning`.
 *
 * Linear contacts only: a Hertz contact's frequency depends on the impact (its stiffness grows
 * with the overlap), so its tuning is null with a note.
 *
 * Pure: safe to import in the browser.
 */
import { reducedMassKg } from "../physics/analytic";
import { linearDampingRatioForRestitution } from "../physics/damping";
import { dampingForRatioNsPerM, naturalFrequencyHz, phasePerSubstep } from "../physics/frequency";
import type { Scenario } from "../physics/types";
import type { Envelope, EnvelopeRow } from "./envelope";
import { cellAt, cellIndex, type ExpandedAxis } from "./grid";
import type { SweepSpec } from "./spec";

export interface ContactTuning {
  /** The pairing's effective (reduced) mass m* (kg). */
  effectiveMassKg: number;
  /** k (N/m). */
  stiffnessNPerM: number;
  /** c (N·s/m) as the engine applies it for this pairing. */
  dampingNsPerM: number;
  /** f_n = √(k/m*)/2π (Hz). */
  frequencyHz: number;
  /** ζ = c/(2√(k·m*)). */
  dampingRatio: number;
  /** ω_n·h with h = dt/substeps; the integrators are stable below 2 (undamped spring). */
  phasePerSubstep: number;
}

/**
 * The effective mass of the pairing the scene's contacts are tuned for: the one pairing of a pair
 * scene; a body against the wall; two equal discs (m/2) in a row or a box; in a snapshot, the two
 * lightest discs — the lightest pairing has the highest frequency, so it is the one that limits dt.
 * Null for a snapshot with fewer than two discs and no walls.
 */
export function sceneEffectiveMassKg(scenario: Readonly<Scenario>): number | null {
  const scene = scenario.scene;
  switch (scene.kind) {
    case "pair":
      return reducedMassKg(scene.massAKg, scene.massBKg);
    case "wall":
      return scene.massKg;
    case "row":
    case "box":
    case "stack":
      return scene.count >= 2 ? scene.massKg / 2 : scene.massKg;
    case "slope":
      return scene.massKg;
    case "snapshot": {
      let lightest = Infinity;
      let second = Infinity;
      for (const body of scene.bodies) {
        if (body.massKg < lightest) {
          second = lightest;
          lightest = body.massKg;
        } else if (body.massKg < second) second = body.massKg;
      }
      if (second < Infinity) return reducedMassKg(lightest, second);
      return lightest < Infinity && scene.walls.length > 0 ? lightest : null;
    }
  }
}

/** The tuning of a scenario's contact, or null (Hertz model, no stiffness, no pairing). */
export function scenarioContactTuning(scenario: Readonly<Scenario>): ContactTuning | null {
  const contact = scenario.contact;
  if (contact.model !== "linear" || contact.stiffness === undefined || !(contact.stiffness > 0)) return null;
  const mEffKg = sceneEffectiveMassKg(scenario);
  if (mEffKg === null) return null;
  const k = contact.stiffness;
  const frequencyHz = naturalFrequencyHz(k, mEffKg);
  let dampingRatio = 0;
  let dampingNsPerM = 0;
  if (contact.damping.kind === "coefficient") {
    dampingNsPerM = contact.damping.value;
    dampingRatio = dampingNsPerM / (2 * Math.sqrt(k * mEffKg));
  } else if (contact.damping.kind === "restitution" && contact.damping.value < 1) {
    // The engine turns a target restitution into a damping ratio for each pairing's own mass
    // (force-ends criterion), so ζ is the same for every k and mass; c follows from it.
    dampingRatio = linearDampingRatioForRestitution(contact.damping.value);
    dampingNsPerM = dampingForRatioNsPerM(dampingRatio, frequencyHz, mEffKg);
  }
  return {
    effectiveMassKg: mEffKg,
    stiffnessNPerM: k,
    dampingNsPerM,
    frequencyHz,
    dampingRatio,
    phasePerSubstep: phasePerSubstep(frequencyHz, scenario.dtS / scenario.substeps),
  };
}

export type TunedEnvelopeRow = EnvelopeRow & { contact: ContactTuning | null };

/**
 * The envelope with each row's contact at its limit: the cell at (x value, yLimit) with the other
 * axes where the envelope held them. Null where the row has no limit or the contact has no linear
 * tuning.
 */
export function withContactTuning(envelope: Envelope, spec: SweepSpec, axes: readonly ExpandedAxis[], options: { x: number; y: number; at?: readonly number[] }): Omit<Envelope, "rows"> & { rows: TunedEnvelopeRow[] } {
  const positions = axes.map((_, i) => options.at?.[i] ?? 0);
  const yValues = axes[options.y].values;
  const rows = envelope.rows.map((row, ix) => {
    if (row.yLimit === null || row.safeY === null) return { ...row, contact: null };
    positions[options.x] = ix;
    // The row's last safe cell: the limit itself is on the grid only with margin 0 (with a margin,
    // indexOf(limit) was −1 and named a wrong cell, or none: a RangeError on a three-axis sweep).
    positions[options.y] = yValues.indexOf(row.safeY);
    const cell = cellAt(spec, axes, cellIndex(axes, positions));
    return { ...row, contact: scenarioContactTuning(cell.scenario) };
  });
  return { ...envelope, rows };
}

/** The tuning of one cell of a sweep (its scenario built from the spec). */
export function cellContactTuning(spec: SweepSpec, axes: readonly ExpandedAxis[], index: number): ContactTuning | null {
  return scenarioContactTuning(cellAt(spec, axes, index).scenario);
}

/** CSV columns the cells export appends with `contact=true`, in this order. */
export const CONTACT_CSV_COLUMNS = ["contact_effective_mass_kg", "contact_stiffness_n_per_m", "contact_damping_ns_per_m", "contact_frequency_hz", "contact_damping_ratio", "contact_phase_per_substep"] as const;

const TUNING_KEYS = ["effectiveMassKg", "stiffnessNPerM", "dampingNsPerM", "frequencyHz", "dampingRatio", "phasePerSubstep"] as const satisfies readonly (keyof ContactTuning)[];

function numberText(value: number, nullText: string): string {
  return Number.isFinite(value) ? String(value) : nullText; // String(−0) is "0"
}

/** `"contact":{…}` or `"contact":null`, fixed key order (the bytes JSON.stringify gives). */
export function contactTuningJson(tuning: ContactTuning | null): string {
  if (tuning === null) return `"contact":null`;
  return `"contact":{${TUNING_KEYS.map((key) => `${JSON.stringify(key)}:${numberText(tuning[key], "null")}`).join(",")}}`;
}

/** The CONTACT_CSV_COLUMNS fields, comma-led; empty fields when there is no tuning. */
export function contactTuningCsv(tuning: ContactTuning | null): string {
  return TUNING_KEYS.map((key) => `,${tuning === null ? "" : numberText(tuning[key], "")}`).join("");
}
