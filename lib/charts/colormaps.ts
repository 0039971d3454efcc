/**
 * Continuous colour scales for metric maps, as 256-entry lookup tables so a 65,536-cell map is
 * coloured by table look-up rather than per-cell colour maths.
 *
 * - Sequential: viridis, the perceptually uniform map of S. van der Walt and N. Smith (2015),
 *   published as a 256-entry RGB table with matplotlib (lib/matplotlib/_cm_listed.py,
 *   `_viridis_data`, released CC0). We keep every 8th entry of that table (indices 0, 8, …, 248)
 *   and its last entry (255) as control points and interpolate linearly in sRGB between them;
 *   the largest deviation from the full table is under 2/255 per channel.
 * - Diverging (signed metrics, difference maps): our own, built in CIE L*a*b*. Lightness falls
 *   linearly from a near-white centre to the same dark lightness at both ends, so |value| reads
 *   as darkness in greyscale and the sign reads as hue (blue below zero, vermilion above).
 */
import { lchToRgb, type Rgb } from "./color";

/** [table index, r, g, b] control points of viridis (see the header for the source). */
export const VIRIDIS_CONTROL_POINTS: readonly (readonly [number, number, number, number])[] = [
  [0, 0.267004, 0.004874, 0.329415],
  [8, 0.277018, 0.050344, 0.375715],
  [16, 0.282327, 0.094955, 0.417331],
  [24, 0.282884, 0.13592, 0.453427],
  [32, 0.278826, 0.17549, 0.483397],
  [40, 0.270595, 0.214069, 0.507052],
  [48, 0.258965, 0.251537, 0.524736],
  [56, 0.244972, 0.287675, 0.53726],
  [64, 0.229739, 0.322361, 0.545706],
  [72, 0.214298, 0.355619, 0.551184],
  [80, 0.19943, 0.387607, 0.554642],
  [88, 0.185556, 0.41857, 0.556753],
  [96, 0.172719, 0.448791, 0.557885],
  [104, 0.160665, 0.47854, 0.558115],
  [112, 0.149039, 0.508051, 0.55725],
  [120, 0.13777, 0.537492, 0.554906],
  [128, 0.127568, 0.566949, 0.550556],
  [136, 0.120565, 0.596422, 0.543611],
  [144, 0.120638, 0.625828, 0.533488],
  [152, 0.132268, 0.655014, 0.519661],
  [160, 0.157851, 0.683765, 0.501686],
  [168, 0.196571, 0.711827, 0.479221],
  [176, 0.24607, 0.73891, 0.452024],
  [184, 0.304148, 0.764704, 0.419943],
  [192, 0.369214, 0.788888, 0.382914],
  [200, 0.440137, 0.811138, 0.340967],
  [208, 0.515992, 0.831158, 0.294279],
  [216, 0.595839, 0.848717, 0.243329],
  [224, 0.678489, 0.863742, 0.189503],
  [232, 0.762373, 0.876424, 0.137064],
  [240, 0.845561, 0.887322, 0.099702],
  [248, 0.926106, 0.89733, 0.104071],
  [255, 0.993248, 0.906157, 0.143936],
];

const VIRIDIS_LAST_INDEX = 255;

/** Viridis at t ∈ [0, 1] (clamped; NaN maps to 0). */
export function viridis(t: number): Rgb {
  const position = (Number.isFinite(t) ? Math.min(1, Math.max(0, t)) : 0) * VIRIDIS_LAST_INDEX;
  const points = VIRIDIS_CONTROL_POINTS;
  let k = 0;
  while (k < points.length - 2 && points[k + 1][0] <= position) k++;
  const [i0, r0, g0, b0] = points[k];
  const [i1, r1, g1, b1] = points[k + 1];
  const f = (position - i0) / (i1 - i0);
  return [r0 + (r1 - r0) * f, g0 + (g1 - g0) * f, b0 + (b1 - b0) * f];
}

const DIVERGING_CENTRE_LIGHTNESS = 97;
const DIVERGING_END_LIGHTNESS = 30;
const DIVERGING_NEGATIVE = { hueDeg: 262, chroma: 50 };
const DIVERGING_POSITIVE = { hueDeg: 38, chroma: 58 };

/**
 * Our diverging scale at t ∈ [0, 1]; t = 0.5 is zero. Chroma grows as sin(π/2·s) of the distance
 * s from the centre so the light middle stays close to neutral. Where that chroma falls outside
 * the sRGB gamut it is reduced (never the lightness), so both arms keep exactly the same
 * lightness profile and |value| reads the same in greyscale on either side.
 */
export function diverging(t: number): Rgb {
  const clamped = Number.isFinite(t) ? Math.min(1, Math.max(0, t)) : 0.5;
  const signed = clamped * 2 - 1;
  const s = Math.abs(signed);
  const arm = signed < 0 ? DIVERGING_NEGATIVE : DIVERGING_POSITIVE;
  const lightness = DIVERGING_CENTRE_LIGHTNESS + (DIVERGING_END_LIGHTNESS - DIVERGING_CENTRE_LIGHTNESS) * s;
  return lchInGamut(lightness, arm.chroma * Math.sin((Math.PI / 2) * s), arm.hueDeg);
}

/** The colour at lightness l and hue h with the largest chroma ≤ `chroma` inside sRGB. */
function lchInGamut(l: number, chroma: number, hueDeg: number): Rgb {
  const wanted = lchToRgb(l, chroma, hueDeg);
  if (wanted.inGamut) return wanted.rgb;
  let lo = 0;
  let hi = chroma;
  for (let i = 0; i < 24; i++) {
    const mid = (lo + hi) / 2;
    if (lchToRgb(l, mid, hueDeg).inGamut) lo = mid;
    else hi = mid;
  }
  return lchToRgb(l, lo, hueDeg).rgb;
}

export type ColourScaleName = "viridis" | "diverging";

export const COLOUR_SCALES: Record<ColourScaleName, (t: number) => Rgb> = {
  viridis,
  diverging,
};

export const LUT_SIZE = 256;

/**
 * RGBA bytes of `size` evenly spaced samples of a scale (entry i is the colour at i / (size − 1)),
 * ready to copy into ImageData.
 */
export function buildColourLut(scale: (t: number) => Rgb, size: number = LUT_SIZE): Uint8ClampedArray {
  if (!Number.isInteger(size) || size < 2) throw new Error(`LUT size must be an integer ≥ 2, got ${size}`);
  const lut = new Uint8ClampedArray(size * 4);
  for (let i = 0; i < size; i++) {
    const [r, g, b] = scale(i / (size - 1));
    lut[i * 4] = Math.round(r * 255);
    lut[i * 4 + 1] = Math.round(g * 255);
    lut[i * 4 + 2] = Math.round(b * 255);
    lut[i * 4 + 3] = 255;
  }
  return lut;
}

/** CSS colour string of a LUT entry (for legends). */
export function lutColourCss(lut: Uint8ClampedArray, index: number): string {
  const i = Math.min(lut.length / 4 - 1, Math.max(0, Math.round(index))) * 4;
  return `rgb(${lut[i]} ${lut[i + 1]} ${lut[i + 2]})`;
}
