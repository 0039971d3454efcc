/**
 * Colour arithmetic for the maps: sRGB ⇄ linear light, relative luminance, CIE L*a*b*.
 * Pure and DOM-free; every channel is a number in [0, 1] unless named `…Byte`.
 */

export type Rgb = readonly [number, number, number];

/** sRGB transfer function inverse (IEC 61966-2-1), with the 0.04045 breakpoint. */
export function srgbToLinear(channel: number): number {
  return channel <= 0.04045 ? channel / 12.92 : ((channel + 0.055) / 1.055) ** 2.4;
}

export function linearToSrgb(linear: number): number {
  return linear <= 0.0031308 ? 12.92 * linear : 1.055 * linear ** (1 / 2.4) - 0.055;
}

/**
 * Relative luminance as WCAG 2.x defines it (W3C, Web Content Accessibility Guidelines 2.1, 2018,
 * "relative luminance": 0.2126 R + 0.7152 G + 0.0722 B of linearised channels; WCAG writes the
 * breakpoint as 0.03928, which gives the same value to within 1e-5 for 8-bit colours).
 */
export function relativeLuminance([r, g, b]: Rgb): number {
  const lin = (c: number) => (c <= 0.03928 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4);
  return 0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b);
}

/** WCAG 2.x contrast ratio (L1 + 0.05) / (L2 + 0.05), lighter over darker. */
export function contrastRatio(a: Rgb, b: Rgb): number {
  const la = relativeLuminance(a);
  const lb = relativeLuminance(b);
  return (Math.max(la, lb) + 0.05) / (Math.min(la, lb) + 0.05);
}

export function hexToRgb(hex: string): Rgb {
  const match = /^#?([0-9a-f]{6})$/i.exec(hex.trim());
  if (!match) throw new Error(`not a #rrggbb colour: ${JSON.stringify(hex)}`);
  const n = parseInt(match[1], 16);
  return [((n >> 16) & 255) / 255, ((n >> 8) & 255) / 255, (n & 255) / 255];
}

export function rgbToHex([r, g, b]: Rgb): string {
  const byte = (c: number) => Math.round(Math.min(1, Math.max(0, c)) * 255).toString(16).padStart(2, "0");
  return `#${byte(r)}${byte(g)}${byte(b)}`;
}

// D65 white in XYZ (Y = 1), and the sRGB ⇄ XYZ matrices of IEC 61966-2-1.
const WHITE_X = 0.95047;
const WHITE_Y = 1;
const WHITE_Z = 1.08883;
const LAB_EPSILON = 216 / 24389;
const LAB_KAPPA = 24389 / 27;

function labF(t: number): number {
  return t > LAB_EPSILON ? Math.cbrt(t) : (LAB_KAPPA * t + 16) / 116;
}

function labFInverse(f: number): number {
  const cube = f * f * f;
  return cube > LAB_EPSILON ? cube : (116 * f - 16) / LAB_KAPPA;
}

/** CIE 1976 L*a*b* (D65) of an sRGB colour. */
export function rgbToLab(rgb: Rgb): [number, number, number] {
  const r = srgbToLinear(rgb[0]);
  const g = srgbToLinear(rgb[1]);
  const b = srgbToLinear(rgb[2]);
  const x = 0.4124564 * r + 0.3575761 * g + 0.1804375 * b;
  const y = 0.2126729 * r + 0.7151522 * g + 0.072175 * b;
  const z = 0.0193339 * r + 0.119192 * g + 0.9503041 * b;
  const fx = labF(x / WHITE_X);
  const fy = labF(y / WHITE_Y);
  const fz = labF(z / WHITE_Z);
  return [116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)];
}

/** sRGB of a CIE L*a*b* (D65) colour; `inGamut` is false when a channel had to be clipped. */
export function labToRgb(l: number, a: number, bStar: number): { rgb: Rgb; inGamut: boolean } {
  const fy = (l + 16) / 116;
  const x = WHITE_X * labFInverse(fy + a / 500);
  const y = WHITE_Y * labFInverse(fy);
  const z = WHITE_Z * labFInverse(fy - bStar / 200);
  const linear = [
    3.2404542 * x - 1.5371385 * y - 0.4985314 * z,
    -0.969266 * x + 1.8760108 * y + 0.041556 * z,
    0.0556434 * x - 0.2040259 * y + 1.0572252 * z,
  ];
  let inGamut = true;
  const channels = linear.map((c) => {
    const s = linearToSrgb(Math.max(0, c));
    if (c < -1e-4 || s > 1 + 1e-4) inGamut = false;
    return Math.min(1, Math.max(0, s));
  });
  return { rgb: [channels[0], channels[1], channels[2]], inGamut };
}

/** L*a*b* from lightness, chroma and hue angle (degrees). */
export function lchToRgb(l: number, chroma: number, hueDeg: number): { rgb: Rgb; inGamut: boolean } {
  const h = (hueDeg * Math.PI) / 180;
  return labToRgb(l, chroma * Math.cos(h), chroma * Math.sin(h));
}
