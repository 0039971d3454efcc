import { describe, expect, it } from "vitest";
import { contrastRatio, hexToRgb, relativeLuminance, rgbToHex, rgbToLab } from "@/lib/charts/color";
import { buildColourLut, diverging, viridis, VIRIDIS_CONTROL_POINTS } from "@/lib/charts/colormaps";
import { comparisonStyles, VERDICT_CATEGORIES, VERDICT_STYLES, VERDICTS_BY_SEVERITY } from "@/lib/charts/categories";
import { autoDomain, denormalise, legendTicks, normalise, domainProblem } from "@/lib/charts/normalise";

/**
 * Entries of the published viridis table: matplotlib lib/matplotlib/_cm_listed.py, `_viridis_data`
 * (S. van der Walt, N. Smith, 2015; CC0), row index → [r, g, b]. Rows 4, 52, 100, 131, 170, 213 and
 * 250 are NOT control points of our implementation, so they check the interpolation too.
 */
const PUBLISHED_VIRIDIS: [number, [number, number, number]][] = [
  [0, [0.267004, 0.004874, 0.329415]],
  [4, [0.272594, 0.025563, 0.353093]],
  [52, [0.252194, 0.269783, 0.531579]],
  [100, [0.166617, 0.463708, 0.558119]],
  [128, [0.127568, 0.566949, 0.550556]],
  [131, [0.124395, 0.578002, 0.548287]],
  [170, [0.20803, 0.718701, 0.472873]],
  [213, [0.565498, 0.84243, 0.262877]],
  [250, [0.945636, 0.899815, 0.112838]],
  [255, [0.993248, 0.906157, 0.143936]],
];

describe("viridis", () => {
  it("matches the published table at its rows", () => {
    for (const [row, rgb] of PUBLISHED_VIRIDIS) {
      const ours = viridis(row / 255);
      // Source: matplotlib _cm_listed.py _viridis_data (see above); tolerance 2/255 per channel
      // between control points, exact (1e-6) at them.
      const isControlPoint = VIRIDIS_CONTROL_POINTS.some(([index]) => index === row);
      const tolerance = isControlPoint ? 1e-6 : 2 / 255;
      for (let c = 0; c < 3; c++) expect(Math.abs(ours[c] - rgb[c])).toBeLessThanOrEqual(tolerance);
    }
  });

  it("gets brighter all the way along (greyscale-monotonic)", () => {
    // Relative luminance per WCAG 2.1 (W3C 2018, definition "relative luminance").
    let previous = -1;
    for (let i = 0; i <= 1024; i++) {
      const y = relativeLuminance(viridis(i / 1024));
      expect(y).toBeGreaterThan(previous);
      previous = y;
    }
    // The 8-bit table the map draws with rounds each channel by up to ½/255, which can undo the tiny
    // luminance gain between neighbouring entries (hand estimate: a ½/255 red step near r = 0.18
    // moves Y by about 0.2126·0.5/255·0.5 ≈ 2e-4); allow 5e-4.
    const lut = buildColourLut(viridis, 256);
    previous = -1;
    for (let i = 0; i < 256; i++) {
      const y = relativeLuminance([lut[i * 4] / 255, lut[i * 4 + 1] / 255, lut[i * 4 + 2] / 255]);
      expect(y).toBeGreaterThan(previous - 5e-4);
      previous = y;
    }
    // From memory: viridis runs from near-black violet to bright yellow, contrast well above 10:1.
    expect(contrastRatio(viridis(0), viridis(1))).toBeGreaterThan(10);
  });

  it("clamps outside [0, 1] and treats NaN as the low end", () => {
    expect(viridis(-3)).toEqual(viridis(0));
    expect(viridis(7)).toEqual(viridis(1));
    expect(viridis(Number.NaN)).toEqual(viridis(0));
  });
});

describe("colour arithmetic", () => {
  it("computes WCAG relative luminance and contrast", () => {
    // WCAG 2.1 (W3C 2018): white has luminance 1, black 0, their contrast is 21:1.
    expect(relativeLuminance([1, 1, 1])).toBeCloseTo(1, 12);
    expect(relativeLuminance([0, 0, 0])).toBe(0);
    expect(contrastRatio([1, 1, 1], [0, 0, 0])).toBeCloseTo(21, 9);
    // From memory: #777777 on white is the classic 4.48:1 "just fails AA" pair.
    expect(contrastRatio(hexToRgb("#777777"), [1, 1, 1])).toBeCloseTo(4.48, 2);
  });

  it("converts sRGB to CIE L*a*b*", () => {
    // From memory: sRGB red (D65) is L* 53.24, a* 80.09, b* 67.20.
    const [l, a, b] = rgbToLab([1, 0, 0]);
    expect(l).toBeCloseTo(53.24, 1);
    expect(a).toBeCloseTo(80.09, 1);
    expect(b).toBeCloseTo(67.2, 1);
    // CIE 1976: white has L* 100 and no chroma.
    const white = rgbToLab([1, 1, 1]);
    expect(white[0]).toBeCloseTo(100, 3);
    expect(Math.abs(white[1]) + Math.abs(white[2])).toBeLessThan(0.01);
  });

  it("round-trips hex", () => {
    expect(rgbToHex(hexToRgb("#72182a"))).toBe("#72182a");
    expect(() => hexToRgb("red")).toThrow(/#rrggbb/);
  });
});

describe("diverging scale", () => {
  const luminanceAt = (t: number) => relativeLuminance(diverging(t));

  it("is lightest at zero and equally dark at ±max", () => {
    // Relative luminance per WCAG 2.1; our design puts L* 97 at the centre and L* 30 at both ends.
    expect(luminanceAt(0.5)).toBeGreaterThan(0.9);
    expect(Math.abs(luminanceAt(0) - luminanceAt(1))).toBeLessThan(0.01);
    for (let s = 0; s < 50; s++) {
      const near = s / 100;
      const far = (s + 1) / 100;
      expect(luminanceAt(0.5 + far)).toBeLessThan(luminanceAt(0.5 + near));
      expect(luminanceAt(0.5 - far)).toBeLessThan(luminanceAt(0.5 - near));
    }
  });

  it("tells the sign apart by hue", () => {
    const [, aNeg, bNeg] = rgbToLab(diverging(0.1));
    const [, aPos, bPos] = rgbToLab(diverging(0.9));
    // Our design: blue (b* < 0) below zero, vermilion (a* > 0, b* > 0) above.
    expect(bNeg).toBeLessThan(-10);
    expect(aPos).toBeGreaterThan(10);
    expect(bPos).toBeGreaterThan(10);
    expect(aNeg).toBeLessThan(aPos);
  });
});

describe("categorical palettes", () => {
  it("darkens monotonically with verdict severity, with a visible step between neighbours", () => {
    // Relative luminance per WCAG 2.1. The 1.3:1 minimum step between neighbours is our own design threshold.
    // The resting-contact verdicts (creep, jitter, sinking: slope and stack scenes only) sit between
    // their neighbours in severity; eleven 1.3:1 steps do not fit between white and black, so the
    // 1.3:1 step holds among the eight impact verdicts and a 1.1:1 step next to a resting verdict,
    // which its own glyph backs up.
    const resting = new Set(["creep", "jitter", "sinking"]);
    const luminanceOf = (v: string) => relativeLuminance(hexToRgb(VERDICT_STYLES[v as keyof typeof VERDICT_STYLES].colour));
    const luminance = VERDICTS_BY_SEVERITY.map(luminanceOf);
    for (let i = 1; i < luminance.length; i++) {
      expect(luminance[i]).toBeLessThan(luminance[i - 1]);
      expect((luminance[i - 1] + 0.05) / (luminance[i] + 0.05)).toBeGreaterThan(resting.has(VERDICTS_BY_SEVERITY[i]) || resting.has(VERDICTS_BY_SEVERITY[i - 1]) ? 1.1 : 1.0);
    }
    const impact = VERDICTS_BY_SEVERITY.filter((v) => !resting.has(v)).map(luminanceOf);
    for (let i = 1; i < impact.length; i++) expect((impact[i - 1] + 0.05) / (impact[i] + 0.05)).toBeGreaterThan(1.3);
    expect(VERDICT_CATEGORIES.map((c) => c.key)).toEqual(["stable", "creep", "coarse-contact", "jitter", "energy-drift", "restitution-off", "sinking", "deep-overlap", "tunneled", "step-unstable", "exploded"]);
  });

  it("gives each verdict its own glyph", () => {
    const glyphs = new Set(VERDICT_CATEGORIES.map((c) => c.glyph));
    expect(glyphs.size).toBe(VERDICT_CATEGORIES.length);
  });

  it("darkens the comparison categories from both-pass to both-fail", () => {
    // Relative luminance per WCAG 2.1; lightness order is our design (see lib/charts/categories.ts).
    const styles = comparisonStyles("Euler", "Verlet");
    const luminance = styles.map((s) => relativeLuminance(hexToRgb(s.colour)));
    for (let i = 1; i < luminance.length; i++) expect((luminance[i - 1] + 0.05) / (luminance[i] + 0.05)).toBeGreaterThan(1.3);
    expect(styles[1].label).toBe("Only Euler fails");
    expect(new Set(styles.map((s) => s.glyph)).size).toBe(styles.length);
  });
});

describe("normalisation", () => {
  it("maps decades evenly on a log scale and round-trips", () => {
    // Hand derivation: 1e-6 … 1e-2 is 4 decades; 1e-4 sits half way.
    const n = { kind: "log" as const, domain: [1e-6, 1e-2] as const };
    expect(normalise(n, 1e-4)).toBeCloseTo(0.5, 12);
    expect(denormalise(n, 0.25)).toBeCloseTo(1e-5, 15);
    expect(normalise(n, 0)).toBe(0);
    expect(normalise(n, 1)).toBe(1);
    expect(normalise(n, Number.NaN)).toBeNaN();
  });

  it("centres zero on a symmetric scale", () => {
    const domain = autoDomain([-0.2, 0.05, Number.NaN, null, 0.1], "symmetric");
    expect(domain).toEqual([-0.2, 0.2]);
    expect(normalise({ kind: "symmetric", domain }, 0)).toBe(0.5);
    expect(normalise({ kind: "symmetric", domain }, Number.POSITIVE_INFINITY)).toBe(1);
  });

  it("widens a one-value domain and ignores what a log scale cannot show", () => {
    expect(autoDomain([3, 3, 3], "linear")).toEqual([1.5, 4.5]);
    expect(autoDomain([0, -1, 100, 1000], "log")).toEqual([100, 1000]);
    expect(autoDomain([Number.NaN], "log")).toEqual([1, 10]);
  });

  it("names a bad domain", () => {
    expect(domainProblem("log", [0, 1])).toMatch(/above 0/);
    expect(domainProblem("linear", [2, 1])).toMatch(/below high/);
    expect(domainProblem("symmetric", [-1, 2])).toMatch(/low = −high/);
    expect(domainProblem("linear", [0, 1])).toBeNull();
  });

  it("gives legend ticks inside the domain", () => {
    const ticks = legendTicks({ kind: "log", domain: [2e-5, 3e-1] });
    expect(ticks.map((t) => t.value)).toEqual([1e-4, 1e-3, 1e-2, 1e-1]);
  });
});
