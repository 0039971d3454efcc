/**
 * The safe envelope of a stability map: for each value of axis x, the furthest value of axis y that
 * can be reached from the start of y (bound "max": from the first y upward; "min": from the last y
 * downward) through stable cells only, pulled back by a margin.
 *
 * Rule (docs/api.md "Safe envelope", the help text of the sweep page says the same):
 *  - safeY is the last y of the walk along y while every cell is stable: the largest y (bound max)
 *    such that every cell at or below it is stable. With verdicts monotone along y (stable up to a
 *    point, then not), safeY is that point; where they are also monotone along x, so is safeY.
 *  - limit = (1 − margin) × safeY (bound max) or safeY / (1 − margin) (bound min), exactly, not
 *    snapped to a grid value: a 10 % margin on 5.64 ms is 5.076 ms.
 *  - a row whose walk meets a cell not computed yet is "pending" (no limit yet), one whose first cell
 *    is not stable is "none-stable"; the others are "ok".
 *
 * Other axes stay at the positions given (`at`, default position 0).
 *
 * Pure: safe to import in the browser.
 */
import type { Scenario, Verdict } from "../physics/types";
import { restitutionDamping } from "../physics/damping";
import { DEFAULT_TANGENTIAL_STIFFNESS_RATIO } from "../physics/constants";
import { z } from "@/lib/zod";
import { cellIndex, type ExpandedAxis } from "./grid";
import { csvText } from "../csv";
import { formatNumber } from "./results";

export type EnvelopeBound = "max" | "min";

export interface EnvelopeInput {
  axes: readonly ExpandedAxis[];
  /** Verdict of a cell by index; undefined while the cell is not done (its row is then pending). */
  verdictAt: (index: number) => Verdict | undefined;
  x: number;
  y: number;
  margin: number;
  bound: EnvelopeBound;
  /** Positions of the other axes (one per axis; entries for x and y are ignored). */
  at?: readonly number[];
}

export type EnvelopeRowStatus = "ok" | "none-stable" | "pending";

export interface EnvelopeRow {
  x: number | string;
  /** The last stable y of the walk (null unless status is "ok"). */
  safeY: number | null;
  /** safeY pulled back by the margin (null unless status is "ok"). */
  yLimit: number | null;
  status: EnvelopeRowStatus;
}

export interface Envelope {
  xPath: string;
  yPath: string;
  margin: number;
  bound: EnvelopeBound;
  rows: EnvelopeRow[];
}

/** Why an envelope request cannot be answered: the field and the message. */
export class EnvelopeInputError extends Error {
  constructor(
    readonly field: string,
    message: string,
  ) {
    super(message);
    this.name = "EnvelopeInputError";
  }
}

export const MAX_ENVELOPE_MARGIN = 0.9;

export function validateEnvelopeInput(input: Omit<EnvelopeInput, "verdictAt">): void {
  const { axes, x, y, margin, bound, at } = input;
  const axisRange = axes.length ? `0..${axes.length - 1}` : "none (the sweep has no axes)";
  if (axes.length < 2) throw new EnvelopeInputError("x", `an envelope needs two axes; the sweep has ${axes.length}`);
  if (!Number.isInteger(x) || x < 0 || x >= axes.length) throw new EnvelopeInputError("x", `x must be an axis index in ${axisRange}; got ${x}`);
  if (!Number.isInteger(y) || y < 0 || y >= axes.length) throw new EnvelopeInputError("y", `y must be an axis index in ${axisRange}; got ${y}`);
  if (x === y) throw new EnvelopeInputError("y", "y must be a different axis from x");
  if (!(margin >= 0 && margin <= MAX_ENVELOPE_MARGIN)) throw new EnvelopeInputError("margin", `margin must be a number from 0 to ${MAX_ENVELOPE_MARGIN}; got ${margin}`);
  if (bound !== "max" && bound !== "min") throw new EnvelopeInputError("bound", `bound must be max or min; got ${String(bound)}`);
  const yValues = axes[y].values;
  if (yValues.some((v) => typeof v !== "number")) throw new EnvelopeInputError("y", `y must be a numeric axis; ${axes[y].parameter} lists choices`);
  if (margin > 0 && (yValues as number[]).some((v) => v <= 0)) throw new EnvelopeInputError("margin", `margin must be 0 for ${axes[y].parameter}: it has values ≤ 0`);
  if (at) {
    if (at.length !== axes.length) throw new EnvelopeInputError("at", `at must give one position per axis (${axes.length}); got ${at.length}`);
    at.forEach((position, i) => {
      if (i === x || i === y) return;
      if (!Number.isInteger(position) || position < 0 || position >= axes[i].values.length)
        throw new EnvelopeInputError("at", `at.${i} must be a position in 0..${axes[i].values.length - 1}; got ${position}`);
    });
  }
}

/** The limit a margin leaves of a safe value (the rule above). */
export function applyMargin(safeY: number, margin: number, bound: EnvelopeBound): number {
  return bound === "max" ? (1 - margin) * safeY : safeY / (1 - margin);
}

export function computeEnvelope(input: EnvelopeInput): Envelope {
  validateEnvelopeInput(input);
  const { axes, x, y, margin, bound, verdictAt } = input;
  const positions = axes.map((_, i) => input.at?.[i] ?? 0);
  const yValues = axes[y].values as number[];
  const n = yValues.length;
  const rows: EnvelopeRow[] = axes[x].values.map((xValue, ix) => {
    positions[x] = ix;
    let safeY: number | null = null;
    let status: EnvelopeRowStatus = "ok";
    for (let step = 0; step < n; step++) {
      positions[y] = bound === "max" ? step : n - 1 - step;
      const verdict = verdictAt(cellIndex(axes, positions));
      if (verdict === undefined) {
        status = "pending";
        break;
      }
      if (verdict !== "stable") break;
      safeY = yValues[positions[y]];
    }
    if (status === "pending") return { x: xValue, safeY: null, yLimit: null, status };
    if (safeY === null) return { x: xValue, safeY: null, yLimit: null, status: "none-stable" };
    return { x: xValue, safeY, yLimit: applyMargin(safeY, margin, bound), status };
  });
  return { xPath: axes[x].parameter, yPath: axes[y].parameter, margin, bound, rows };
}

// ---------------------------------------------------------------------------
// Exports

export const ENVELOPE_FORMAT = "kickdrift-envelope";
/**
 * 2: rows carry safeY and status, the document its sweep, units, rules, tolerances and criterion.
 * 3: `damping`, the damping of the sweep's contacts under both contact-end criteria.
 * 4: `friction`, the tangential contact settings beside the normal ones (μ, k_t, tangential damping, rolling resistance).
 */
export const ENVELOPE_FORMAT_VERSION = 4;
/**
 * When the engine ends a contact (and converts a target restitution into damping): when the
 * clamped contact force returns to zero, slightly before the overlap does (Schwager & Pöschel 2007).
 */
export const CONTACT_END_CRITERION = "force-zero";

export const ENVELOPE_RULE =
  "safeY: the last y, walking y from its start, up to which every cell is stable; limit = (1 − margin) × safeY (bound max) or safeY / (1 − margin) (bound min); pending while a walked cell is not computed";

const axisDescription = z.strictObject({ parameter: z.string(), label: z.string(), unit: z.string() });

const criterionDamping = z.union([z.strictObject({ dampingRatio: z.number().min(0) }), z.strictObject({ beta: z.number().min(0) })]);

/**
 * The damping of the sweep's contacts as a game engine needs it. For a target restitution, the
 * damping that gives it under each contact-end criterion: `forceZero` (the contact ends where the
 * clamped force returns to zero, as in Kickdrift's engine; Schwager & Pöschel 2007) and
 * `overlapZero` (it ends where the overlap does and the force may pull meanwhile, as in an engine
 * that does not clamp; Luding 2008) — linear as the damping ratio ζ (c = 2ζ√(m*·k)), Hertz as β
 * (η = β√(m*·k_H)). One entry per contact model and restitution the sweep uses.
 */
export const envelopeDampingSchema = z.discriminatedUnion("kind", [
  z.strictObject({ kind: z.literal("none") }),
  z.strictObject({
    kind: z.literal("coefficient"),
    /** c (N·s/m, linear) or η (N·s/m^1.25, Hertz) as the spec gives it; its restitution depends on the criterion, stiffness and mass. */
    values: z.array(z.strictObject({ model: z.enum(["linear", "hertz"]), value: z.number().min(0), unit: z.string() })),
  }),
  z.strictObject({
    kind: z.literal("restitution"),
    values: z.array(z.strictObject({ model: z.enum(["linear", "hertz"]), restitution: z.number(), forceZero: criterionDamping, overlapZero: criterionDamping })),
  }),
]);

export type EnvelopeDamping = z.infer<typeof envelopeDampingSchema>;

/** The damping entry of a sweep's envelope export: its contact models × its damping values (axes included). */
export function envelopeDamping(spec: { scenario: Pick<Scenario, "contact">; axes: readonly { parameter: string; pairs?: readonly { restitution?: number }[] }[] }, axes: readonly ExpandedAxis[]): EnvelopeDamping {
  const scenario = spec.scenario;
  const damping = scenario.contact.damping;
  const modelAxis = axes.find((axis) => axis.parameter === "contact.model");
  const models = (modelAxis ? modelAxis.values : [scenario.contact.model]) as ("linear" | "hertz")[];
  if (damping.kind === "none") return { kind: "none" };
  const valueAxis = axes.find((axis) => axis.parameter === (damping.kind === "restitution" ? "contact.damping.restitution" : "contact.damping.coefficient"));
  const values = new Set<number>(valueAxis ? (valueAxis.values as number[]) : [damping.value]);
  if (damping.kind === "restitution") {
    // Pairs may carry their own restitution (scene.pair axis).
    for (const axis of spec.axes) for (const pair of axis.pairs ?? []) if (pair.restitution !== undefined) values.add(pair.restitution);
    const sorted = [...values].sort((a, b) => b - a);
    return { kind: "restitution", values: models.flatMap((model) => sorted.map((restitution) => restitutionDamping(model, restitution))) };
  }
  const sorted = [...values].sort((a, b) => a - b);
  return { kind: "coefficient", values: models.flatMap((model) => sorted.map((value) => ({ model, value, unit: model === "linear" ? "N·s/m" : "N·s/m^1.25" }))) };
}

/**
 * The friction of the sweep's contacts as a game engine needs it, beside the normal stiffness and
 * damping: each setting as the list of values the sweep used (its axis's values, else the spec's one
 * value, else the engine's default), in ascending order. The tangential spring is a ratio of the
 * normal stiffness unless the spec gives it in N/m (`stiffnessNPerM`; the ratio is then null).
 * `none`: frictionless, non-rotating discs (no friction and no rolling resistance anywhere in the sweep).
 */
export const envelopeFrictionSchema = z.discriminatedUnion("kind", [
  z.strictObject({ kind: z.literal("none") }),
  z.strictObject({
    kind: z.literal("coulomb"),
    /** Cundall & Strack 1979: a tangential spring and dashpot capped by μ·F_n. */
    model: z.literal("cundall-strack"),
    coefficient: z.array(z.number().min(0)),
    /** μ_s where the spec gives one (a sticking contact needs more than μ to start sliding); null: μ_s = μ. */
    staticCoefficient: z.array(z.number().min(0)).nullable(),
    stiffnessRatio: z.array(z.number().positive()).nullable(),
    stiffnessNPerM: z.array(z.number().positive()).nullable(),
    dampingRatio: z.array(z.number().min(0)),
    /** μ_r, a torque μ_r·R·F_n against rolling (Ai, Chen, Rotter & Ooi 2011); 0 for none. */
    rollingResistance: z.array(z.number().min(0)),
  }),
]);

export type EnvelopeFriction = z.infer<typeof envelopeFrictionSchema>;

/** The friction entry of a sweep's envelope export: each setting's values over the sweep (axes included). */
export function envelopeFriction(
  spec: { scenario: Pick<Scenario, "contact">; axes?: readonly { pairs?: readonly { friction?: number; rollingResistance?: number }[] }[] },
  axes: readonly ExpandedAxis[],
): EnvelopeFriction {
  const { friction, rollingResistance } = spec.scenario.contact;
  const valuesOf = (path: string, fixed: number | undefined): number[] | null => {
    const axis = axes.find((candidate) => candidate.parameter === path);
    if (axis) return [...new Set(axis.values as number[])].sort((a, b) => a - b);
    return fixed === undefined ? null : [fixed];
  };
  // A scene.pair axis may give every pair its own μ and μ_r (all or none): then every cell takes a pair's value.
  const perPair = (field: "friction" | "rollingResistance"): number[] | null => {
    const values = (spec.axes ?? []).flatMap((axis) => (axis.pairs ?? []).flatMap((pair) => (pair[field] === undefined ? [] : [pair[field] as number])));
    return values.length > 0 ? [...new Set(values)].sort((a, b) => a - b) : null;
  };
  const coefficient = perPair("friction") ?? valuesOf("contact.friction.coefficient", friction?.coefficient) ?? [0];
  const rolling = perPair("rollingResistance") ?? valuesOf("contact.rollingResistance", rollingResistance) ?? [0];
  const staticCoefficient = valuesOf("contact.friction.staticCoefficient", friction?.staticCoefficient);
  if (coefficient.every((value) => value === 0) && (staticCoefficient ?? [0]).every((value) => value === 0) && rolling.every((value) => value === 0)) return { kind: "none" };
  const stiffnessNPerM = valuesOf("contact.friction.stiffness", friction?.stiffness);
  return {
    kind: "coulomb",
    model: "cundall-strack",
    coefficient,
    staticCoefficient,
    // A k_t in N/m overrides the ratio (lib/physics/tangential.ts).
    stiffnessRatio: stiffnessNPerM ? null : (valuesOf("contact.friction.stiffnessRatio", friction?.stiffnessRatio) ?? [DEFAULT_TANGENTIAL_STIFFNESS_RATIO]),
    stiffnessNPerM,
    dampingRatio: valuesOf("contact.friction.dampingRatio", friction?.dampingRatio) ?? [0],
    rollingResistance: rolling,
  };
}

/** The published schema of an envelope export (JSON); docs/api.md describes every field. */
export const envelopeDocumentSchema = z.strictObject({
  format: z.literal(ENVELOPE_FORMAT),
  version: z.literal(ENVELOPE_FORMAT_VERSION),
  sweep: z.strictObject({ id: z.string(), name: z.string(), specHash: z.string().regex(/^[0-9a-f]{64}$/) }),
  x: axisDescription,
  y: axisDescription,
  bound: z.enum(["max", "min"]),
  margin: z.number().min(0).max(MAX_ENVELOPE_MARGIN),
  rule: z.literal(ENVELOPE_RULE),
  verdictRules: z.number().int().min(1),
  tolerances: z.record(z.string(), z.number()),
  contactEnd: z.literal(CONTACT_END_CRITERION),
  damping: envelopeDampingSchema,
  friction: envelopeFrictionSchema,
  rows: z.array(
    z.strictObject({
      x: z.union([z.number(), z.string()]),
      safeY: z.number().nullable(),
      limit: z.number().nullable(),
      status: z.enum(["ok", "none-stable", "pending"]),
    }),
  ),
});

export type EnvelopeDocument = z.infer<typeof envelopeDocumentSchema>;

export interface EnvelopeExportContext {
  sweepId: string;
  name: string;
  specHash: string;
  axes: readonly ExpandedAxis[];
  x: number;
  y: number;
  verdictRules: number;
  tolerances: Readonly<Record<string, number | undefined>>;
  /** envelopeDamping(spec.scenario, axes). */
  damping: EnvelopeDamping;
  /** envelopeFriction(spec, axes). */
  friction: EnvelopeFriction;
}

export function envelopeDocument(envelope: Envelope, context: EnvelopeExportContext): EnvelopeDocument {
  const describe = (axis: ExpandedAxis) => ({ parameter: axis.parameter, label: axis.label, unit: axis.unit });
  const tolerances: Record<string, number> = {};
  for (const [key, value] of Object.entries(context.tolerances)) if (typeof value === "number") tolerances[key] = value;
  return {
    format: ENVELOPE_FORMAT,
    version: ENVELOPE_FORMAT_VERSION,
    sweep: { id: context.sweepId, name: context.name, specHash: context.specHash },
    x: describe(context.axes[context.x]),
    y: describe(context.axes[context.y]),
    bound: envelope.bound,
    margin: envelope.margin,
    rule: ENVELOPE_RULE,
    verdictRules: context.verdictRules,
    tolerances,
    contactEnd: CONTACT_END_CRITERION,
    damping: context.damping,
    friction: context.friction,
    rows: envelope.rows.map((row) => ({ x: row.x, safeY: row.safeY, limit: row.yLimit, status: row.status })),
  };
}

/**
 * CSV of an envelope document: "#"-prefixed lines with the document's fields (key: JSON value),
 * then a header whose columns carry their units, then one row per x (RFC 4180, CRLF).
 */
export function envelopeCsv(document: EnvelopeDocument): string {
  const { rows, x, y, ...meta } = document;
  const lines: string[] = [];
  for (const [key, value] of Object.entries({ ...meta, x, y })) lines.push(`# ${key}: ${JSON.stringify(value)}`);
  const unit = (axis: { unit: string }) => (axis.unit ? ` [${axis.unit}]` : "");
  const text = csvText;
  const number = (value: number | null) => (value === null ? "" : formatNumber(value));
  lines.push([text(`${x.parameter}${unit(x)}`), text(`${y.parameter} safe${unit(y)}`), text(`${y.parameter} ${document.bound} limit${unit(y)}`), "status"].join(","));
  for (const row of rows) lines.push([typeof row.x === "number" ? formatNumber(row.x) : text(row.x), number(row.safeY), number(row.limit), row.status].join(","));
  return `${lines.join("\r\n")}\r\n`;
}
