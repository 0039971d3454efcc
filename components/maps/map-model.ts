/**
 * The data a stability map draws, resolved once from its props: cell colours (as a packed RGBA
 * table per cell), legend content, overlays in axis units. Framework-free, so the same model
 * feeds the on-screen canvas, the PNG export and the benchmark.
 */
import type { Verdict } from "@/lib/physics/types";
import { hexToRgb, relativeLuminance } from "@/lib/charts/color";
import { buildColourLut, COLOUR_SCALES, type ColourScaleName } from "@/lib/charts/colormaps";
import { autoDomain, clippedDomain, clipProblem, countOutside, domainProblem, normalise, type Normalisation, type NormalisationKind, type PercentileClip } from "@/lib/charts/normalise";
import { axisValuesProblem, type AxisSpacing } from "@/lib/charts/scales";
import { countCodes, PENDING_CODE, VERDICT_CATEGORIES, verdictCodes, type CategoryStyle } from "@/lib/charts/categories";
import { overlayFromFunction, type Overlay, type OverlayStroke } from "@/lib/charts/overlays";
import { formatFrameRate, formatFrameStepWithRate, formatPrecise, formatSI } from "@/lib/ui/units";

/** One axis of a map. `values` are the cells' parameter values along it, strictly increasing. */
export interface MapAxis {
  /** e.g. "Contact stiffness". */
  label: string;
  /** SI unit without prefix, e.g. "N/m", "s", "kg", "m/s"; "" for dimensionless. Tick labels add SI prefixes. */
  unit: string;
  values: readonly number[] | Float64Array;
  /** "log" places cells at their log positions (values must be > 0). */
  spacing: AxisSpacing;
  /** "frame-step": values are frame steps in seconds, read in Hz on ticks and as "1/60 s · 16.7 ms" on hover. */
  quantity?: "frame-step";
}

/** A tick label in the axis's own reading: frame steps as frame rates ("60 Hz"), the rest with an SI prefix. */
export function axisTickLabel(axis: Pick<MapAxis, "unit" | "quantity">, value: number): string {
  return axis.quantity === "frame-step" ? formatFrameRate(value) : formatSI(value, axis.unit);
}

/** An axis value on hover: "60 Hz (1/60 s · 16.67 ms)" for a frame step, six figures with an SI prefix for the rest. */
export function axisValueText(axis: Pick<MapAxis, "unit" | "quantity">, value: number): string {
  return axis.quantity === "frame-step" ? formatFrameStepWithRate(value, 4) : formatPrecise(value, axis.unit);
}

/** How metric values map to colour. Defaults: linear, domain from the data, viridis (diverging for symmetric and symlog). */
export interface MetricScaleOptions {
  normalisation?: NormalisationKind;
  /** A fixed domain; otherwise from the data (all of it, or `clip`ped to percentiles). */
  domain?: readonly [number, number];
  /** Percentiles the domain from the data is clipped to (ignored with a fixed domain). */
  clip?: PercentileClip;
  /** "symlog": the constant C below which the scale is nearly linear. */
  constant?: number;
  colours?: ColourScaleName;
}

/**
 * What the cells show, row-major (index = row · x.values.length + column; row 0 is the first y value).
 * - metric: a number per cell; NaN = not computed yet (hatched), null = computed but no value
 *   (e.g. no contact ended, so no restitution), drawn in neutral grey.
 * - verdict: a verdict per cell; null/undefined = not computed yet.
 * - categories: any categorical map (e.g. the A/B comparison); code i is categories[i],
 *   PENDING_CODE (255) = not computed yet.
 */
export type MapLayer =
  | { kind: "metric"; label: string; unit: string; values: ArrayLike<number | null>; scale?: MetricScaleOptions }
  | { kind: "verdict"; verdicts: readonly (Verdict | null | undefined)[] }
  | { kind: "categories"; label: string; codes: ArrayLike<number>; categories: readonly CategoryStyle[] };

/** An overlay given as points in axis units, or as y = f(x) sampled across the map's x range. */
export type OverlayInput = Overlay | { label: string; y: (x: number) => number; samples?: number; stroke?: OverlayStroke };

export interface ContinuousScale {
  kind: "continuous";
  normalisation: Normalisation;
  /** The percentiles the domain was clipped to, when it was. */
  clip?: PercentileClip;
  colours: ColourScaleName;
  /** 256 RGBA entries. */
  lut: Uint8ClampedArray;
  label: string;
  unit: string;
}

export interface CategoricalScale {
  kind: "categorical";
  label: string;
  categories: readonly CategoryStyle[];
}

export type ResolvedScale = ContinuousScale | CategoricalScale;

export interface MapModel {
  columns: number;
  rows: number;
  x: MapAxis;
  y: MapAxis;
  scale: ResolvedScale;
  /** Packed RGBA (native byte order, ready for a Uint32Array view of ImageData) per cell, rows top-down as drawn: entry (rows − 1 − row) · columns + column. */
  pixels: Uint32Array;
  /** Per cell: category code (categorical) or LUT index (continuous); PENDING_CODE / −1 pending, NO_VALUE for null. */
  codes: Int16Array;
  /** Per category (categorical scale) the number of cells; empty for continuous. */
  counts: number[];
  /** Continuous scale: cells whose value lies below / above the domain (drawn in the end colours). */
  outside: { below: number; above: number };
  pendingCount: number;
  noValueCount: number;
  overlays: Overlay[];
}

export const CELL_PENDING = -1;
export const CELL_NO_VALUE = -2;
const NO_VALUE_RGB: readonly [number, number, number] = [0.62, 0.62, 0.62];

/** A problem with the props, naming the field; the map shows it instead of drawing. */
export class MapInputError extends Error {
  constructor(
    readonly field: string,
    message: string,
  ) {
    super(`${field}: ${message}`);
  }
}

function cellCountOf(layer: MapLayer): number {
  if (layer.kind === "metric") return layer.values.length;
  if (layer.kind === "verdict") return layer.verdicts.length;
  return layer.codes.length;
}

/** Check axes and layer sizes; throws MapInputError naming the field. */
export function validateMapInput(x: MapAxis, y: MapAxis, layer: MapLayer): void {
  const xProblem = axisValuesProblem(x.values, x.spacing);
  if (xProblem) throw new MapInputError("x.values", xProblem);
  const yProblem = axisValuesProblem(y.values, y.spacing);
  if (yProblem) throw new MapInputError("y.values", yProblem);
  const expected = x.values.length * y.values.length;
  const actual = cellCountOf(layer);
  const field = layer.kind === "metric" ? "layer.values" : layer.kind === "verdict" ? "layer.verdicts" : "layer.codes";
  if (actual !== expected) {
    throw new MapInputError(field, `${actual} cells for a ${x.values.length} × ${y.values.length} map (needs ${expected})`);
  }
  if (layer.kind === "metric" && layer.scale?.domain) {
    const problem = domainProblem(layer.scale.normalisation ?? "linear", layer.scale.domain);
    if (problem) throw new MapInputError("layer.scale.domain", problem);
  }
  if (layer.kind === "metric" && layer.scale?.clip) {
    const problem = clipProblem(layer.scale.clip);
    if (problem) throw new MapInputError("layer.scale.clip", problem);
  }
  if (layer.kind === "metric" && layer.scale?.constant !== undefined && !(layer.scale.constant > 0 && Number.isFinite(layer.scale.constant))) {
    throw new MapInputError("layer.scale.constant", `must be a finite number above 0, got ${layer.scale.constant}`);
  }
}

/** The continuous scale of a metric layer, optionally over several layers' values (a shared scale). */
export function resolveMetricScale(
  label: string,
  unit: string,
  valueSets: readonly ArrayLike<number | null>[],
  options: MetricScaleOptions = {},
): ContinuousScale {
  const kind = options.normalisation ?? "linear";
  let domain: readonly [number, number];
  let clip: PercentileClip | undefined;
  if (options.domain) {
    domain = options.domain;
  } else {
    const all: (number | null)[] = [];
    for (const set of valueSets) for (let i = 0; i < set.length; i++) all.push(set[i]);
    clip = options.clip && (options.clip.low > 0 || options.clip.high < 100) ? options.clip : undefined;
    domain = clip ? clippedDomain(all, kind, clip) : autoDomain(all, kind);
  }
  const colours = options.colours ?? (kind === "symmetric" || kind === "symlog" ? "diverging" : "viridis");
  const normalisation: Normalisation = kind === "symlog" && options.constant ? { kind, domain, constant: options.constant } : { kind, domain };
  return { kind: "continuous", normalisation, ...(clip ? { clip } : {}), colours, lut: lutFor(colours), label, unit };
}

const lutCache = new Map<ColourScaleName, Uint8ClampedArray>();
function lutFor(name: ColourScaleName): Uint8ClampedArray {
  let lut = lutCache.get(name);
  if (!lut) {
    lut = buildColourLut(COLOUR_SCALES[name]);
    lutCache.set(name, lut);
  }
  return lut;
}

export function verdictScale(): CategoricalScale {
  return { kind: "categorical", label: "Verdict", categories: VERDICT_CATEGORIES };
}

function scaleOf(layer: MapLayer): ResolvedScale {
  if (layer.kind === "metric") return resolveMetricScale(layer.label, layer.unit, [layer.values], layer.scale);
  if (layer.kind === "verdict") return verdictScale();
  return { kind: "categorical", label: layer.label, categories: layer.categories };
}

/** Pack r, g, b bytes and alpha into the Uint32 that a Uint32Array view of RGBA bytes holds. */
function packer(): (r: number, g: number, b: number, a: number) => number {
  const bytes = new Uint8ClampedArray(4);
  const word = new Uint32Array(bytes.buffer);
  return (r, g, b, a) => {
    bytes[0] = r;
    bytes[1] = g;
    bytes[2] = b;
    bytes[3] = a;
    return word[0];
  };
}

function resolveOverlays(inputs: readonly OverlayInput[] | undefined, x: MapAxis): Overlay[] {
  if (!inputs) return [];
  const n = x.values.length;
  // Sample a little past the outer cell centres so curves reach the plot edges.
  const first = x.values[0];
  const last = x.values[n - 1];
  const range: [number, number] =
    x.spacing === "log" ? [first / 2, last * 2] : [first - (last - first || 1) * 0.1, last + (last - first || 1) * 0.1];
  return inputs.map((input) => ("points" in input ? input : overlayFromFunction(input.label, input.y, range, x.spacing, { samples: input.samples ?? 96, stroke: input.stroke })));
}

/**
 * Resolve props into a drawable model. `sharedScale` replaces the layer's own scale (side-by-side
 * maps and small multiples share one).
 */
export function buildMapModel(x: MapAxis, y: MapAxis, layer: MapLayer, overlays?: readonly OverlayInput[], sharedScale?: ResolvedScale): MapModel {
  validateMapInput(x, y, layer);
  const columns = x.values.length;
  const rows = y.values.length;
  const cellCount = columns * rows;
  const scale = sharedScale ?? scaleOf(layer);
  const pixels = new Uint32Array(cellCount);
  const codes = new Int16Array(cellCount);
  const pack = packer();
  const transparent = pack(0, 0, 0, 0);
  const noValue = pack(Math.round(NO_VALUE_RGB[0] * 255), Math.round(NO_VALUE_RGB[1] * 255), Math.round(NO_VALUE_RGB[2] * 255), 255);
  let pendingCount = 0;
  let noValueCount = 0;
  let counts: number[] = [];
  let outside = { below: 0, above: 0 };

  if (scale.kind === "continuous") {
    if (layer.kind !== "metric") throw new MapInputError("layer", "a continuous scale needs a metric layer");
    const { lut, normalisation } = scale;
    const lutSize = lut.length / 4;
    const packedLut = new Uint32Array(lutSize);
    for (let i = 0; i < lutSize; i++) packedLut[i] = pack(lut[i * 4], lut[i * 4 + 1], lut[i * 4 + 2], 255);
    const values = layer.values;
    outside = countOutside(values, normalisation.domain);
    for (let row = 0; row < rows; row++) {
      const drawnRow = (rows - 1 - row) * columns;
      for (let column = 0; column < columns; column++) {
        const index = row * columns + column;
        const v = values[index];
        let code: number;
        let pixel: number;
        if (v === null) {
          code = CELL_NO_VALUE;
          pixel = noValue;
          noValueCount++;
        } else if (Number.isNaN(v)) {
          code = CELL_PENDING;
          pixel = transparent;
          pendingCount++;
        } else {
          code = Math.round(normalise(normalisation, v) * (lutSize - 1));
          pixel = packedLut[code];
        }
        codes[index] = code;
        pixels[drawnRow + column] = pixel;
      }
    }
  } else {
    const categoryCodes = layer.kind === "verdict" ? verdictCodes(layer.verdicts) : layer.kind === "categories" ? layer.codes : null;
    if (!categoryCodes) throw new MapInputError("layer", "a categorical scale needs a verdict or categories layer");
    const categoryCount = scale.categories.length;
    const packedColours = scale.categories.map((c) => {
      const [r, g, b] = hexToRgb(c.colour);
      return pack(Math.round(r * 255), Math.round(g * 255), Math.round(b * 255), 255);
    });
    for (let row = 0; row < rows; row++) {
      const drawnRow = (rows - 1 - row) * columns;
      for (let column = 0; column < columns; column++) {
        const index = row * columns + column;
        const c = categoryCodes[index];
        if (c === PENDING_CODE) {
          codes[index] = CELL_PENDING;
          pixels[drawnRow + column] = transparent;
          pendingCount++;
        } else if (Number.isInteger(c) && c >= 0 && c < categoryCount) {
          codes[index] = c;
          pixels[drawnRow + column] = packedColours[c];
        } else {
          throw new MapInputError("layer.codes", `cell ${index} has code ${c}; codes run from 0 to ${categoryCount - 1}, or ${PENDING_CODE} for not computed`);
        }
      }
    }
    counts = countCodes(categoryCodes, categoryCount);
  }
  return { columns, rows, x, y, scale, pixels, codes, counts, outside, pendingCount, noValueCount, overlays: resolveOverlays(overlays, x) };
}

/** Black or white, whichever contrasts more with a #rrggbb fill (for glyphs drawn on cells). */
export function inkOn(colourHex: string): "#000000" | "#ffffff" {
  const y = relativeLuminance(hexToRgb(colourHex));
  // WCAG 2.x contrast against black is (y + 0.05)/0.05, against white 1.05/(y + 0.05).
  return (y + 0.05) / 0.05 >= 1.05 / (y + 0.05) ? "#000000" : "#ffffff";
}
