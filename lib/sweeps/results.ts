/**
 * The per-cell result record and its serialisers (JSON and CSV).
 *
 * Bytes are deterministic: fixed key and column order, numbers in the shortest
 * round-trip form (`String(n)`, −0 as 0), non-finite numbers as null (JSON) or
 * an empty field (CSV), cells in index order, "\n" line ends in JSON and
 * "\r\n" in CSV (RFC 4180). Nothing that varies between runs (timings, dates,
 * thread counts) is written.
 *
 * Serialisers are generators of text pieces so a 262,144-cell sweep can be
 * streamed to a file; `…ToString` helpers join them for small results.
 *
 * Pure: safe to import in the browser.
 */
import { csvText } from "../csv";
import type { Metrics, Verdict } from "../physics/types";
import { VERDICTS } from "../physics/types";
import type { ExpandedAxis } from "./grid";

export interface CellResult {
  index: number;
  /** One value per axis, in axis order. */
  axisValues: (number | string)[];
  verdict: Verdict;
  reason: string;
  metrics: Metrics;
}

/** Metric fields in the order they are written. */
export const METRIC_KEYS = [
  "momentumDriftRelX",
  "momentumDriftRelY",
  "energyErrorRel",
  "maxEnergyErrorRel",
  "effectiveRestitution",
  "maxOverlapFraction",
  "contactDurationS",
  "contactSteps",
  "tunneled",
  "exploded",
  "steps",
  // Added with verdict rules 2 (results stored before have them null).
  "maxOmegaH",
  "amplification",
] as const satisfies readonly (keyof Metrics)[];

/**
 * Metrics of runs with friction (lib/physics/spin-metrics.ts) and of the resting scenes
 * (lib/physics/rest-metrics.ts). Stored from packed format version 3 on (runs stored before have
 * them null), and written by the exports after METRIC_KEYS only for sweeps that measure them
 * (`sweepMeasuresRotation`), so the exports of every other sweep keep their bytes.
 */
export const ROTATION_METRIC_KEYS = [
  "angularMomentumDriftRel",
  "maxTangentialOmegaH",
  "slidingSteps",
  "endSlipMPerS",
  "reboundSpinRadPerS",
  "reboundAngleDeg",
  "settleTimeS",
  "residualKineticJ",
  "residualMaxSpeedMPerS",
  "creepM",
  "restingOverlapFraction",
  "restingOverlapRatio",
] as const satisfies readonly (keyof Metrics)[];

// Every Metrics field must be listed (a new engine metric fails the type check here).
type MissingMetric = Exclude<keyof Metrics, (typeof METRIC_KEYS)[number] | (typeof ROTATION_METRIC_KEYS)[number]>;
const allMetricsListed: [MissingMetric] extends [never] ? true : false = true;
void allMetricsListed;

/** Metric fields of packed runs of format version 1 (before maxOmegaH and amplification): the first entries of METRIC_KEYS. */
export const METRIC_COUNT_V1 = 11;
/** Metric fields of packed runs of format version 2 (before the rotation metrics): all of METRIC_KEYS. */
export const METRIC_COUNT_V2 = METRIC_KEYS.length;

/** Every metric a packed run of the current format stores, in its order: METRIC_KEYS, then ROTATION_METRIC_KEYS. */
export const STORED_METRIC_KEYS = [...METRIC_KEYS, ...ROTATION_METRIC_KEYS] as const;

/** The metric fields a sweep's exports write: the rotation metrics only where the sweep measures them. */
export function exportedMetricKeys(rotation: boolean | undefined): readonly (keyof Metrics)[] {
  return rotation ? STORED_METRIC_KEYS : METRIC_KEYS;
}

/** What `sweepMeasuresRotation` reads of a spec (a parsed spec, or the spec a sweep view carries). */
export interface RotationSpecPart {
  scenario: {
    scene: { kind: string };
    contact: { friction?: { coefficient?: number; staticCoefficient?: number }; rollingResistance?: number };
  };
  /** A scene.pair axis may give each pair its own friction and rolling resistance. */
  axes?: readonly { pairs?: readonly { friction?: number; rollingResistance?: number }[] }[];
}

const ROTATION_AXIS_PARAMETERS: ReadonlySet<string> = new Set(["contact.friction.coefficient", "contact.friction.staticCoefficient", "contact.rollingResistance"]);

/**
 * Whether any cell of the sweep can report the rotation metrics: the engine measures them in runs
 * with friction or rolling resistance (lib/physics/simulate.ts; in the scenario, on an axis or per
 * pair of a scene.pair axis) and in the resting scenes, slope and stack (lib/physics/rest-metrics.ts). Decided from the spec and its axes alone, so every chunk and
 * every export of one sweep has the same columns.
 */
export function sweepMeasuresRotation(spec: RotationSpecPart, axes: readonly { parameter: string; values: readonly (number | string)[] }[]): boolean {
  const { scene, contact } = spec.scenario;
  if (scene.kind === "slope" || scene.kind === "stack") return true;
  if ((contact.friction?.coefficient ?? 0) > 0 || (contact.friction?.staticCoefficient ?? 0) > 0 || (contact.rollingResistance ?? 0) > 0) return true;
  if (spec.axes?.some((axis) => axis.pairs?.some((pair) => (pair.friction ?? 0) > 0 || (pair.rollingResistance ?? 0) > 0))) return true;
  return axes.some((axis) => ROTATION_AXIS_PARAMETERS.has(axis.parameter) && axis.values.some((value) => typeof value === "number" && value > 0));
}

/**
 * Just the contract's metric fields, in the stored order (drops anything extra an engine returns;
 * a rotation metric the run did not measure is null, as a packed run reads it back).
 */
export function pickMetrics(metrics: Metrics): Metrics {
  const picked: Record<string, unknown> = {};
  for (const key of STORED_METRIC_KEYS) picked[key] = metrics[key] ?? null;
  return picked as unknown as Metrics;
}

export type VerdictCounts = Record<Verdict, number>;

export function emptyVerdictCounts(): VerdictCounts {
  const counts = {} as VerdictCounts;
  for (const verdict of VERDICTS) counts[verdict] = 0;
  return counts;
}

export function countVerdicts(results: Iterable<Pick<CellResult, "verdict">>, into: VerdictCounts = emptyVerdictCounts()): VerdictCounts {
  for (const result of results) into[result.verdict] += 1;
  return into;
}

// ---------------------------------------------------------------------------
// JSON

/** A number in its shortest round-trip form; −0 as 0; non-finite as null. */
export function formatNumber(value: number): string {
  if (!Number.isFinite(value)) return "null";
  return Object.is(value, -0) ? "0" : String(value);
}

function jsonValue(value: number | string | boolean | null): string {
  if (value === null) return "null";
  if (typeof value === "number") return formatNumber(value);
  if (typeof value === "boolean") return value ? "true" : "false";
  return JSON.stringify(value);
}

export interface ResultsHeader {
  /** Optional sweep name from the spec. */
  name?: string;
  /** specHash() of the parsed spec. */
  specHash: string;
  /** Version of the verdict rules the cells were judged by (the spec's scenario.verdictRules; 1 when absent). */
  verdictRules: number;
  axes: readonly ExpandedAxis[];
  cellCount: number;
  /** The sweep measures the rotation metrics (`sweepMeasuresRotation`): the cells carry them after the others. */
  rotationMetrics?: boolean;
}

export const RESULTS_FORMAT = "kickdrift-sweep-results";
/**
 * 2: verdictRules in the head, metrics maxOmegaH and amplification, the verdicts of rules 2.
 * 3: sweeps with friction, rolling resistance or a resting scene carry the rotation metrics
 * (ROTATION_METRIC_KEYS) after the others; other sweeps' cells are as in version 2.
 */
export const RESULTS_FORMAT_VERSION = 3;

/** One cell as a JSON object with fixed key order (`rotation`: with the rotation metrics after the others). */
export function cellToJson(result: CellResult, axes: readonly ExpandedAxis[], rotation?: boolean): string {
  const parameters = axes.map((axis, i) => `${JSON.stringify(axis.parameter)}:${jsonValue(result.axisValues[i])}`).join(",");
  const metrics = exportedMetricKeys(rotation).map((key) => `${JSON.stringify(key)}:${jsonValue((result.metrics[key] ?? null) as number | boolean | null)}`).join(",");
  return `{"index":${result.index},"parameters":{${parameters}},"verdict":${JSON.stringify(result.verdict)},"reason":${JSON.stringify(result.reason)},"metrics":{${metrics}}}`;
}

/**
 * Encoders write a results document piece by piece: head(), then cells() for
 * consecutive runs of cells in index order, then tail(). They check that every
 * cell comes once, in order, so a mis-ordered merge cannot produce a file.
 */
export interface ResultsEncoder {
  head(): string;
  cells(results: readonly CellResult[]): string;
  tail(): string;
}

function orderGuard(header: ResultsHeader) {
  let expected = 0;
  return {
    take(result: CellResult) {
      if (result.index !== expected) throw new Error(`results out of order: cell ${result.index} where cell ${expected} was expected`);
      expected++;
      return expected === 1;
    },
    finish() {
      if (expected !== header.cellCount) throw new Error(`results hold ${expected} cells; the sweep has ${header.cellCount}`);
    },
  };
}

/**
 * The JSON document:
 * { format, version, name?, specHash, verdictRules, cellCount, axes, cells: [one per line], verdictCounts }.
 */
export function jsonResultsEncoder(header: ResultsHeader): ResultsEncoder {
  const guard = orderGuard(header);
  const counts = emptyVerdictCounts();
  return {
    head() {
      const name = header.name !== undefined ? `"name":${JSON.stringify(header.name)},` : "";
      const axes = header.axes
        .map(
          (axis) =>
            `{"parameter":${JSON.stringify(axis.parameter)},"label":${JSON.stringify(axis.label)},"unit":${JSON.stringify(axis.unit)},"values":[${axis.values.map((value) => jsonValue(value)).join(",")}]}`,
        )
        .join(",");
      return `{"format":${JSON.stringify(RESULTS_FORMAT)},"version":${RESULTS_FORMAT_VERSION},${name}"specHash":${JSON.stringify(header.specHash)},"verdictRules":${header.verdictRules},"cellCount":${header.cellCount},\n"axes":[${axes}],\n"cells":[\n`;
    },
    cells(results) {
      let text = "";
      for (const result of results) {
        const first = guard.take(result);
        counts[result.verdict] += 1;
        text += `${first ? "" : ",\n"}${cellToJson(result, header.axes, header.rotationMetrics)}`;
      }
      return text;
    },
    tail() {
      guard.finish();
      const countText = VERDICTS.map((verdict) => `${JSON.stringify(verdict)}:${counts[verdict]}`).join(",");
      return `\n],\n"verdictCounts":{${countText}}}\n`;
    },
  };
}

export function* resultsToJsonPieces(header: ResultsHeader, results: Iterable<CellResult>): Generator<string> {
  yield* encodeAll(jsonResultsEncoder(header), results);
}

function* encodeAll(encoder: ResultsEncoder, results: Iterable<CellResult>): Generator<string> {
  yield encoder.head();
  for (const result of results) yield encoder.cells([result]);
  yield encoder.tail();
}

export function resultsToJson(header: ResultsHeader, results: Iterable<CellResult>): string {
  return [...resultsToJsonPieces(header, results)].join("");
}

// ---------------------------------------------------------------------------
// CSV

function csvValue(value: number | string | boolean | null): string {
  if (value === null) return "";
  if (typeof value === "number") return Number.isFinite(value) ? formatNumber(value) : "";
  if (typeof value === "boolean") return value ? "true" : "false";
  return csvText(value);
}

export function csvHeader(axes: readonly ExpandedAxis[], rotation?: boolean): string {
  return ["index", ...axes.map((axis) => csvText(axis.parameter)), "verdict", "reason", ...exportedMetricKeys(rotation)].join(",");
}

export function cellToCsv(result: CellResult, rotation?: boolean): string {
  return [
    String(result.index),
    ...result.axisValues.map((value) => csvValue(value)),
    csvText(result.verdict),
    csvText(result.reason),
    ...exportedMetricKeys(rotation).map((key) => csvValue((result.metrics[key] ?? null) as number | boolean | null)),
  ].join(",");
}

/** Header row and one row per cell, CRLF after every row. */
export function csvResultsEncoder(header: ResultsHeader): ResultsEncoder {
  const guard = orderGuard(header);
  return {
    head: () => `${csvHeader(header.axes, header.rotationMetrics)}\r\n`,
    cells(results) {
      let text = "";
      for (const result of results) {
        guard.take(result);
        text += `${cellToCsv(result, header.rotationMetrics)}\r\n`;
      }
      return text;
    },
    tail() {
      guard.finish();
      return "";
    },
  };
}

export function* resultsToCsvPieces(header: ResultsHeader, results: Iterable<CellResult>): Generator<string> {
  yield* encodeAll(csvResultsEncoder(header), results);
}

export function resultsToCsv(header: ResultsHeader, results: Iterable<CellResult>): string {
  return [...resultsToCsvPieces(header, results)].join("");
}
