/**
 * Colour scales chosen per metric (issue 22): the symmetric-log scale of energy errors, percentile
 * clipping with the cells beyond it counted, the words the legend shows, the glyph geometry shared
 * by the canvas, the SVG export and the pair matrix, and the title block of an exported map.
 */
import { describe, expect, it } from "vitest";
import { buildMapModel, type MapAxis } from "@/components/maps/map-model";
import { scaleNote } from "@/components/maps/scale-note";
import { COLOUR_RANGES, METRIC_LAYERS, mapTitleBlock, metricScale } from "@/components/sweeps/sweep-map-data";
import { clippedDomain, denormalise, legendTicks, normalise, percentileSorted, symexp, symlog } from "@/lib/charts/normalise";
import { glyphSvgPath } from "@/lib/charts/glyphs";
import { VERDICT_STYLES } from "@/lib/charts/categories";

const x: MapAxis = { label: "Stiffness", unit: "N/m", values: [1e3, 1e4, 1e5, 1e6], spacing: "log" };
const y: MapAxis = { label: "Frame step", unit: "s", values: [1e-3], spacing: "linear" };

describe("symmetric-log normalisation", () => {
  it("is sign(v)·log10(1 + |v|/C) and inverts exactly", () => {
    // Webber, "A bi-symmetric log transformation for wide-range data", Meas. Sci. Technol. 24 (2013) 027001, eq. 1:
    // with C = 10⁻³, v = 9·10⁻³ gives log10(10) = 1; v = −99 with C = 1 gives −log10(100) = −2.
    expect(symlog(9e-3, 1e-3)).toBeCloseTo(1, 12);
    expect(symlog(-99, 1)).toBeCloseTo(-2, 12);
    expect(symlog(0, 1)).toBe(0);
    for (const v of [-1e6, -0.02, -1e-5, 0, 3e-4, 0.5, 7e5]) expect(symexp(symlog(v, 1e-3), 1e-3)).toBeCloseTo(v, Math.max(0, 9 - Math.ceil(Math.log10(Math.abs(v) + 1))));
  });

  it("puts zero in the middle and spaces decades above C equally on both sides", () => {
    const n = { kind: "symlog" as const, domain: [-99, 99] as const, constant: 1 };
    expect(normalise(n, 0)).toBeCloseTo(0.5, 12);
    // symlog(9) = 1 and symlog(99) = 2 (the paper's eq. 1), so 9 sits at (1 + 2)/(2·2) = 0.75.
    expect(normalise(n, 9)).toBeCloseTo(0.75, 12);
    expect(normalise(n, -9)).toBeCloseTo(0.25, 12);
    expect(normalise(n, 1e9)).toBe(1);
    expect(denormalise(n, 0.75)).toBeCloseTo(9, 9);
  });

  it("keeps the energy errors of an ordinary map apart where a linear scale made them one colour", () => {
    // A map with one blown-up cell (10⁶) and errors of 10⁻⁴ … 10⁻¹: on a symmetric linear scale they all
    // land within 10⁻⁷ of the centre (0.5), one of its two middle colours; on the symlog scale with C = tolerance/10 they spread out.
    const values = [1e-4, 1e-3, 1e-2, 1e-1, -1e-2, 1e6];
    const linear = buildMapModel({ ...x, values: [1, 2, 3, 4, 5, 6], spacing: "linear" }, y, { kind: "metric", label: "E", unit: "", values, scale: { normalisation: "symmetric" } });
    const symmetricLog = buildMapModel({ ...x, values: [1, 2, 3, 4, 5, 6], spacing: "linear" }, y, {
      kind: "metric",
      label: "E",
      unit: "",
      values,
      scale: metricScale(METRIC_LAYERS[0], { energyDriftRel: 0.01 }, "all"),
    });
    const distinct = (codes: Int16Array) => new Set(Array.from(codes.slice(0, 5))).size;
    expect(distinct(linear.codes)).toBeLessThanOrEqual(2); // the two LUT entries either side of the centre
    expect(distinct(symmetricLog.codes)).toBe(5);
    expect(symmetricLog.scale.kind === "continuous" && symmetricLog.scale.normalisation.constant).toBe(1e-3);
  });

  it("labels its legend with 0, decades and the domain ends", () => {
    const ticks = legendTicks({ kind: "symlog", domain: [-1e6, 1e6], constant: 1e-3 }).map((t) => t.value);
    expect(ticks).toContain(0);
    expect(ticks[0]).toBe(-1e6);
    expect(ticks[ticks.length - 1]).toBe(1e6);
    expect(ticks).toEqual([...ticks].sort((a, b) => a - b));
    expect(ticks.length).toBeLessThanOrEqual(13);
  });
});

describe("percentile clipping", () => {
  it("interpolates between closest ranks (Hyndman & Fan type 7)", () => {
    // Hyndman & Fan, "Sample quantiles in statistical packages", Am. Stat. 50 (1996), definition 7:
    // h = (n − 1)p; for 1 … 5, p = 0.10 gives h = 0.4 → 1 + 0.4·(2 − 1) = 1.4, p = 0.25 gives 2.
    expect(percentileSorted([1, 2, 3, 4, 5], 10)).toBeCloseTo(1.4, 12);
    expect(percentileSorted([1, 2, 3, 4, 5], 25)).toBe(2);
    expect(percentileSorted([1, 2, 3, 4, 5], 100)).toBe(5);
    expect(percentileSorted([7], 50)).toBe(7);
  });

  it("clips a linear domain to the percentiles and counts the cells beyond at each end", () => {
    const values = Array.from({ length: 101 }, (_, i) => i);
    expect(clippedDomain(values, "linear", { low: 5, high: 95 })).toEqual([5, 95]);
    const model = buildMapModel({ label: "k", unit: "", values: values.map((v) => v + 1), spacing: "linear" }, y, {
      kind: "metric",
      label: "v",
      unit: "",
      values,
      scale: { clip: { low: 5, high: 95 } },
    });
    expect(model.outside).toEqual({ below: 5, above: 5 });
    expect(model.scale.kind === "continuous" && model.scale.clip).toEqual({ low: 5, high: 95 });
  });

  it("clips a centred scale on |value| and keeps zero in the middle", () => {
    const values = [-1e6, -0.5, 0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8];
    const [lo, hi] = clippedDomain(values, "symlog", { low: 1, high: 90 });
    expect(lo).toBe(-hi);
    expect(hi).toBeLessThan(1);
  });

  it("says in the legend which scale and range are used and how many cells lie beyond", () => {
    const model = buildMapModel({ label: "k", unit: "", values: Array.from({ length: 101 }, (_, i) => i + 1), spacing: "linear" }, y, {
      kind: "metric",
      label: "v",
      unit: "",
      values: Array.from({ length: 101 }, (_, i) => i),
      scale: { clip: { low: 1, high: 99 } },
    });
    if (model.scale.kind !== "continuous") throw new Error("expected a continuous scale");
    expect(scaleNote(model.scale, model.outside)).toEqual(["Linear scale", "Range: 1st–99th percentile", "1 below, 1 above (end colours)"]);
  });

  it("names the field when a clip is unusable", () => {
    expect(() => buildMapModel(x, y, { kind: "metric", label: "v", unit: "", values: [1, 2, 3, 4], scale: { clip: { low: 60, high: 40 } } })).toThrow(/layer\.scale\.clip: the low percentile \(60\) must be below the high one \(40\)/);
  });

  it("offers every value as a choice and clips to the 1st–99th percentile by default", () => {
    expect(COLOUR_RANGES.map((r) => r.key)).toContain("all");
    expect(metricScale(METRIC_LAYERS[3], {}, COLOUR_RANGES[0].key).clip).toEqual({ low: 1, high: 99 });
    // A metric with a fixed domain (overlap 0 … 1) ignores the range choice.
    const overlap = METRIC_LAYERS.find((m) => m.key === "maxOverlapFraction")!;
    expect(metricScale(overlap, {}, "p5-95")).toEqual({ normalisation: "linear", domain: [0, 1] });
  });
});

describe("glyphs shared by canvas, SVG and HTML", () => {
  it("gives every verdict a different glyph path", () => {
    const paths = Object.values(VERDICT_STYLES).map((style) => glyphSvgPath(style.glyph, 12, 12, 12));
    expect(new Set(paths).size).toBe(paths.length);
    for (const path of paths) expect(path).toMatch(/^M/);
  });

  it("draws a ring as a closed circle of the ring's radius", () => {
    // ring: radius 0.62·s, so s = 10 gives 6.2 around (12, 12): two half arcs from (18.2, 12) through (5.8, 12).
    expect(glyphSvgPath("ring", 12, 12, 10)).toBe("M18.2 12A6.2 6.2 0 1 1 5.8 12A6.2 6.2 0 1 1 18.2 12");
  });
});

describe("title block of an exported map", () => {
  it("names the sweep, both axes with their ranges, what is held, what is shown and the tolerances", () => {
    const lines = mapTitleBlock({
      sweepName: "Puck rebound at 60 Hz",
      sweepId: "sw_123",
      x,
      y: { label: "Frame step", unit: "s", values: [1 / 120, 1 / 60, 1 / 30], spacing: "linear", quantity: "frame-step" },
      held: ["Integrator = velocity Verlet"],
      showing: "Verdict",
      tolerances: { energyDriftRel: 0.02 },
    });
    expect(lines[0]).toBe("Sweep: Puck rebound at 60 Hz (sw_123)");
    expect(lines[1]).toContain("Stiffness 1 kN/m … 1 MN/m, 4 values, log spacing");
    expect(lines[1]).toContain("Frame step");
    expect(lines[2]).toBe("Held: Integrator = velocity Verlet");
    expect(lines[3]).toBe("Showing: Verdict");
    expect(lines[4]).toMatch(/^Tolerances: energy drift 0\.02, overlap 0\.1 × radius/);
  });
});
