import { describe, expect, it } from "vitest";
import { DEFAULT_CHECK_FORM, settingsOf } from "@/components/catalogues/catalogue-view";

// dt = 1 / f (definition of frequency, SI brochure, BIPM 2019, table 4: hertz = s⁻¹); "1/60 s" and
// "16.7 ms" as ways to write a frame step are common practice in game code.
describe("the catalogue check form's frame step", () => {
  const dtOf = (frameStep: string) => settingsOf({ ...DEFAULT_CHECK_FORM, frameStep }).dtS;

  it("reads a frame rate, a fraction of a second or a step, as the builder does", () => {
    expect(DEFAULT_CHECK_FORM.frameStep).toBe("60 Hz");
    expect(dtOf("60 Hz")).toBe(1 / 60);
    expect(dtOf("120 fps")).toBe(1 / 120);
    expect(dtOf("1/30")).toBe(1 / 30);
    expect(dtOf("16.7 ms")).toBeCloseTo(0.0167, 15);
  });

  it("takes a plain number as Hz, as the field's earlier Hz-only form did", () => {
    expect(dtOf("60")).toBe(1 / 60);
  });

  it("leaves out what it cannot read (the field says why), so the API names dtS as missing", () => {
    expect(dtOf("sixty")).toBeUndefined();
    expect(dtOf("")).toBeUndefined();
    expect(dtOf("0 Hz")).toBeUndefined();
  });
});
