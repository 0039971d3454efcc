import { describe, expect, it } from "vitest";
import { buildMapModel, CELL_NO_VALUE, CELL_PENDING, inkOn, MapInputError, resolveMetricScale, type MapAxis } from "@/components/maps/map-model";
import { PENDING_CODE, VERDICT_STYLES } from "@/lib/charts/categories";
import { hexToRgb } from "@/lib/charts/color";

const x: MapAxis = { label: "Stiffness", unit: "N/m", values: [1e3, 1e4, 1e5], spacing: "log" };
const y: MapAxis = { label: "Timestep", unit: "s", values: [1e-3, 2e-3], spacing: "linear" };

/** RGBA bytes of a packed cell colour (the model packs in the platform's byte order). */
function bytesOf(word: number): number[] {
  return Array.from(new Uint8Array(new Uint32Array([word]).buffer));
}

describe("map model", () => {
  it("draws row 0 at the bottom: cell (row, column) lands in image row rows − 1 − row", () => {
    const model = buildMapModel(x, y, { kind: "verdict", verdicts: ["stable", "stable", "exploded", "tunneled", "stable", "stable"] });
    // Cell index 2 is row 0, column 2 (exploded) → image position (2 − 1 − 0)·3 + 2 = 5.
    const [r, g, b] = hexToRgb(VERDICT_STYLES.exploded.colour).map((c) => Math.round(c * 255));
    expect(bytesOf(model.pixels[5])).toEqual([r, g, b, 255]);
    // Cell index 3 is row 1, column 0 (tunneled) → image position 0.
    const tunneled = hexToRgb(VERDICT_STYLES.tunneled.colour).map((c) => Math.round(c * 255));
    expect(bytesOf(model.pixels[0])).toEqual([...tunneled, 255]);
    // Severity order (lib/charts/categories.ts): stable 0 … tunneled 8, step-unstable 9, exploded 10.
    expect(model.counts).toEqual([4, 0, 0, 0, 0, 0, 0, 0, 1, 0, 1]);
  });

  it("leaves cells not computed yet transparent and counts them", () => {
    const model = buildMapModel(x, y, { kind: "metric", label: "Energy error", unit: "", values: [0, 0.5, 1, Number.NaN, null, 0.25] });
    expect(model.pendingCount).toBe(1);
    expect(model.noValueCount).toBe(1);
    expect(model.codes[3]).toBe(CELL_PENDING);
    expect(model.codes[4]).toBe(CELL_NO_VALUE);
    // Cell 3 is row 1, column 0 → image position 0; fully transparent so the hatching shows.
    expect(bytesOf(model.pixels[0])[3]).toBe(0);
    // Linear domain [0, 1] from the data: 0.5 → LUT entry round(0.5·255) = 128 (hand derivation).
    expect(model.codes[1]).toBe(128);
  });

  it("uses a shared scale when given one", () => {
    const shared = resolveMetricScale("Energy error", "", [[0, 1], [3, 4]]);
    expect(shared.normalisation.domain).toEqual([0, 4]);
    const model = buildMapModel(x, y, { kind: "metric", label: "Energy error", unit: "", values: [0, 1, 2, 3, 4, 2] }, undefined, shared);
    // 2 on [0, 4] is half way: LUT entry 128 (hand derivation).
    expect(model.codes[2]).toBe(128);
  });

  it("names the field and the limit when the input is wrong", () => {
    const tooFew = () => buildMapModel(x, y, { kind: "verdict", verdicts: ["stable"] });
    expect(tooFew).toThrow(MapInputError);
    expect(tooFew).toThrow("layer.verdicts: 1 cells for a 3 × 2 map (needs 6)");
    expect(() => buildMapModel({ ...x, values: [1, 0.5, 2] }, y, { kind: "verdict", verdicts: [] })).toThrow(/^x\.values: values must increase strictly/);
    expect(() =>
      buildMapModel(x, y, { kind: "metric", label: "e", unit: "", values: [1, 2, 3, 4, 5, 6], scale: { normalisation: "log", domain: [0, 1] } }),
    ).toThrow(/layer\.scale\.domain: a log scale needs a domain above 0/);
    expect(() =>
      buildMapModel(x, y, { kind: "categories", label: "c", codes: [0, 1, 2, 0, 0, PENDING_CODE], categories: [VERDICT_STYLES.stable, VERDICT_STYLES.exploded] }),
    ).toThrow(/layer\.codes: cell 2 has code 2; codes run from 0 to 1/);
  });

  it("resolves overlay functions across the x range", () => {
    const model = buildMapModel(x, y, { kind: "verdict", verdicts: new Array(6).fill(null) }, [{ label: "line", y: (k) => 1 / Math.sqrt(k) }]);
    const [overlay] = model.overlays;
    expect(overlay.points.length).toBeGreaterThan(10);
    // Sampled from half the first value to twice the last (the resolver's rule), log-spaced.
    expect(overlay.points[0].x).toBeCloseTo(500, 9);
    expect(overlay.points[overlay.points.length - 1].x).toBeCloseTo(2e5, 6);
    for (const p of overlay.points) expect(p.y).toBeCloseTo(1 / Math.sqrt(p.x), 12);
  });

  it("picks the glyph ink with the higher WCAG contrast", () => {
    // WCAG 2.1 contrast: pale cells get black ink, dark cells white.
    expect(inkOn(VERDICT_STYLES.stable.colour)).toBe("#000000");
    expect(inkOn(VERDICT_STYLES.exploded.colour)).toBe("#ffffff");
  });
});
