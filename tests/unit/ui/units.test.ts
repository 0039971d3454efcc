import { describe, expect, it } from "vitest";
import { NUMERIC_PARAMETERS } from "@/lib/sweeps/parameters";
import { SWEEP_TEMPLATES } from "@/lib/sweeps/templates";
import { describeSpecField } from "@/lib/ui/spec-fields";
import {
  formatFrameRate,
  formatFrameStep,
  formatFrameStepWithRate,
  contactUnit,
  formatParameterValue,
  inputUnitLabel,
  frameStepInputText,
  frameStepListText,
  frameStepTickValues,
  ordinal,
  parseFrameStep,
  parseFrameStepList,
  wholeFrameRate,
} from "@/lib/ui/units";

// The frame step is the reciprocal of the frame rate, dt = 1 / f (definition of frequency, SI brochure,
// BIPM 2019, table 4: hertz = s⁻¹). Writing a step as "1/60 s" or "16.7 ms" is common practice in game code.
describe("parseFrameStep", () => {
  it("reads a frame rate, a fraction and a step to the same double the templates use", () => {
    const sixtieth = 1 / 60;
    for (const text of ["60 Hz", "60hz", "60 HZ", "60 fps", " 60 Hz ", "1/60", "1/60 s", "1 / 60 s"]) {
      expect(parseFrameStep(text), text).toEqual({ ok: true, seconds: sixtieth });
    }
    expect(parseFrameStep("0.06 kHz")).toEqual({ ok: true, seconds: 1 / 60 });
    expect(parseFrameStep("16.7 ms")).toEqual({ ok: true, seconds: 16.7e-3 });
    expect(parseFrameStep("0.0025 s")).toEqual({ ok: true, seconds: 0.0025 });
    expect(parseFrameStep("250 µs")).toEqual({ ok: true, seconds: 250e-6 });
    // A decimal comma, as typed on many European keyboards.
    expect(parseFrameStep("16,7 ms")).toEqual({ ok: true, seconds: 16.7e-3 });
  });

  it("takes the field's unit for a plain number and refuses to guess without one", () => {
    expect(parseFrameStep("120", "Hz")).toEqual({ ok: true, seconds: 1 / 120 });
    expect(parseFrameStep("8", "ms")).toEqual({ ok: true, seconds: 0.008 });
    const guessed = parseFrameStep("60");
    expect(guessed.ok).toBe(false);
    if (!guessed.ok) expect(guessed.message).toMatch(/needs a unit: Hz, s or ms/);
  });

  it("says what is wrong in words", () => {
    const cases: [string, RegExp][] = [
      ["", /Enter a frame step/],
      ["fast", /"fast" is not a frame step/],
      ["60 m", /"m" is not a unit of frame steps/],
      ["0 Hz", /must be more than zero/],
      ["-16 ms", /must be more than zero/],
      ["1/0", /divides by zero/],
    ];
    for (const [text, message] of cases) {
      const result = parseFrameStep(text);
      expect(result.ok, text).toBe(false);
      if (!result.ok) expect(result.message, text).toMatch(message);
    }
  });
});

describe("parseFrameStepList", () => {
  it("shares a unit written after the last entry", () => {
    expect(parseFrameStepList("30, 60, 120 Hz")).toEqual({ ok: true, seconds: [1 / 30, 1 / 60, 1 / 120] });
    expect(parseFrameStepList("8.33, 16.7 ms")).toEqual({ ok: true, seconds: [8.33e-3, 16.7e-3] });
  });

  it("takes fractions as typed and mixes units per entry", () => {
    expect(parseFrameStepList("1/120, 1/60, 1/30")).toEqual({ ok: true, seconds: [1 / 120, 1 / 60, 1 / 30] });
    expect(parseFrameStepList("240 Hz, 1/60, 20 ms")).toEqual({ ok: true, seconds: [1 / 240, 1 / 60, 0.02] });
  });

  it("names the entry that does not parse by its place and text", () => {
    const result = parseFrameStepList("30, sixty, 120 Hz");
    expect(result).toMatchObject({ ok: false, position: 1 });
    if (!result.ok) expect(result.message).toBe('2nd value "sixty" is not a frame step: type a frame rate (60 Hz), a fraction of a second (1/60 s) or a step (16.7 ms)');
    const empty = parseFrameStepList(" , ");
    expect(empty.ok).toBe(false);
  });
});

describe("formatting frame steps", () => {
  it("writes a whole fraction of a second as the trade does", () => {
    expect(formatFrameStep(1 / 60)).toBe("1/60 s · 16.7 ms");
    expect(formatFrameStep(1 / 120)).toBe("1/120 s · 8.33 ms");
    expect(formatFrameStep(1 / 30)).toBe("1/30 s · 33.3 ms");
    expect(formatFrameStep(0.0025)).toBe("1/400 s · 2.5 ms");
    expect(formatFrameStep(0.0007)).toBe("700 µs · 1.43 kHz");
    expect(formatFrameRate(1 / 60)).toBe("60 Hz");
    expect(formatFrameRate(1 / 4000)).toBe("4000 Hz");
    expect(formatFrameRate(0.0007)).toBe("1.43 kHz");
    expect(formatFrameStepWithRate(1 / 60, 4)).toBe("60 Hz (1/60 s · 16.67 ms)");
  });

  it("reads a step back from what its field shows, exactly", () => {
    for (const seconds of [1 / 30, 1 / 60, 1 / 120, 1 / 4000, 0.0167, 0.000437, 1 / 7]) {
      const parsed = parseFrameStep(frameStepInputText(seconds));
      expect(parsed.ok && parsed.seconds, String(seconds)).toBe(seconds);
    }
    expect(frameStepListText([1 / 120, 1 / 60, 1 / 30])).toBe("120, 60, 30 Hz");
    const list = parseFrameStepList(frameStepListText([1 / 4000, 0.0167]));
    expect(list).toEqual({ ok: true, seconds: [1 / 4000, 0.0167] });
  });

  it("finds whole frame rates only where 1/dt is one", () => {
    expect(wholeFrameRate(1 / 60)).toBe(60);
    expect(wholeFrameRate(0.0167)).toBeNull();
    expect(wholeFrameRate(2)).toBeNull();
  });

  it("shows no 16-digit floats for any template's frame step", () => {
    for (const template of SWEEP_TEMPLATES) {
      const text = formatParameterValue("dtS", template.spec.scenario.dtS, "s");
      expect(text).not.toMatch(/\d{6,}/);
      expect(text).toMatch(/^1\/\d+ s · /);
    }
    expect(formatParameterValue("contact.stiffness", 31622.776601683792, "N/m")).toBe("31.6 kN/m");
    expect(formatParameterValue("contact.stiffness", 31622.776601683792, "N/m", { precise: true })).toBe("31.6228 kN/m");
    expect(formatParameterValue("integrator", "velocity-verlet", "")).toBe("velocity-verlet");
  });

  it("puts a few-valued frame-step axis's ticks on its own cells, a long one on common frame rates", () => {
    expect(frameStepTickValues(1 / 120, 1 / 30, [1 / 120, 1 / 60, 1 / 30], 6)).toEqual([1 / 120, 1 / 60, 1 / 30]);
    const many = Array.from({ length: 12 }, (_, i) => (1 / 4000) * (4000 / 30) ** (i / 11));
    const ticks = frameStepTickValues(1 / 4000, 1 / 30, many, 6);
    expect(ticks.length).toBeLessThanOrEqual(6);
    expect(ticks.length).toBeGreaterThanOrEqual(3);
    for (const tick of ticks) expect(wholeFrameRate(tick)).not.toBeNull();
  });

  it("numbers places in English", () => {
    expect([1, 2, 3, 4, 11, 12, 13, 21, 22, 23, 101, 111].map(ordinal)).toEqual(["1st", "2nd", "3rd", "4th", "11th", "12th", "13th", "21st", "22nd", "23rd", "101st", "111th"]);
  });
});

describe("describeSpecField", () => {
  it("names a field in the builder's words, never by its JSON path", () => {
    const axes = ["contact.stiffness", "dtS", "integrator"];
    expect(describeSpecField("axes.1.values.0", "pair", axes)).toBe("Axis 2 (frame step dt), 1st value");
    expect(describeSpecField("axes.0.from", "pair", axes)).toBe("Axis 1 (contact stiffness k), from");
    expect(describeSpecField("spec.axes.2", "pair", axes)).toBe("Axis 3 (integrator)");
    expect(describeSpecField("scenario.dtS", "pair", axes)).toBe("Frame step dt");
    expect(describeSpecField("scenario.scene.massAKg", "pair", axes)).toBe("Mass of A");
    expect(describeSpecField("scenario.tolerances.maxOverlapFraction", "pair", axes)).toBe("Deepest overlap allowed");
    expect(describeSpecField("scenario.scene.bodies.3.massKg", "snapshot", [])).toBe("Disc 4 of the snapshot, massKg");
  });
});

// The units follow from each force law by dimensions. Linear spring F = k·δ → k in N/m; dashpot
// F = c·δ̇ → c in N·s/m. Hertz F = k·δ^1.5 (H. Hertz, "Über die Berührung fester elastischer Körper",
// 1882; K. L. Johnson, Contact Mechanics, 1985, ch. 4 — from memory) → k in N/m^1.5; the Hertz dashpot
// of the engine, F = η·δ^(1/4)·δ̇ (lib/physics/types.ts, the form of Tsuji, Tanaka and Ishida, Powder
// Technology 71, 1992), → η in N/(m^0.25 · m/s) = N·s/m^1.25.
describe("units of the builder's fields", () => {
  it("gives stiffness and damping coefficient the unit of the scene's force law", () => {
    expect(contactUnit("contact.stiffness", "N/m (linear) or N/m^1.5 (hertz)", "linear")).toBe("N/m");
    expect(contactUnit("contact.stiffness", "N/m (linear) or N/m^1.5 (hertz)", "hertz")).toBe("N/m^1.5");
    expect(contactUnit("contact.damping.coefficient", "N·s/m (linear) or N·s/m^1.25 (hertz)", "linear")).toBe("N·s/m");
    expect(contactUnit("contact.damping.coefficient", "N·s/m (linear) or N·s/m^1.25 (hertz)", "hertz")).toBe("N·s/m^1.25");
    expect(contactUnit("scene.massAKg", "kg", "hertz")).toBe("kg");
  });

  it("labels every sweepable number with one unit under either model, the frame step with what its field accepts", () => {
    for (const model of ["linear", "hertz"] as const) {
      for (const parameter of NUMERIC_PARAMETERS) {
        const label = inputUnitLabel(parameter.path, parameter.unit, model);
        if (parameter.path === "dtS") expect(label).toBe("Hz, s or ms");
        // The parameter axis's option and its From / To fields used to disagree here: one unit, never "a or b".
        else expect(label, `${parameter.path} under ${model}`).not.toMatch(/ or /);
        expect(label).not.toBe("");
      }
    }
    expect(inputUnitLabel("scenario.substeps", "", "linear")).toBe("no unit");
  });
});
