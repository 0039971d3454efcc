import { describe, expect, it } from "vitest";
import { logMinorTicks, logTicks, niceLinearTicks, niceStep } from "@/lib/charts/ticks";
import { formatPrecise, formatSI, formatSignificant } from "@/lib/charts/format";

const values = (ticks: { value: number }[]) => ticks.map((t) => t.value);

describe("nice linear ticks", () => {
  it("steps through 1, 2 and 5 times a power of ten", () => {
    // The 1-2-5 sequence of tick steps (common practice).
    expect(niceStep(0.17)).toBe(0.2);
    expect(niceStep(3)).toBe(5);
    expect(niceStep(7)).toBe(10);
    expect(niceStep(1)).toBe(1);
    expect(niceStep(0.0004)).toBe(0.0005);
  });

  it("places exact multiples of the step inside the range, without binary noise", () => {
    // Hand derivation: range 1 over 5 ticks → step 0.2; multiples 0 … 1.
    expect(values(niceLinearTicks(0, 1, 5))).toEqual([0, 0.2, 0.4, 0.6, 0.8, 1]);
    // Hand derivation: (0.0871 − 0.0013)/5 = 0.01716 → step 0.02; multiples inside: 0.02 … 0.08.
    expect(values(niceLinearTicks(0.0013, 0.0871, 5))).toEqual([0.02, 0.04, 0.06, 0.08]);
    // Hand derivation: a signed range keeps 0 as a tick: step 0.5 over [−1.2, 1.2].
    expect(values(niceLinearTicks(-1.2, 1.2, 5))).toEqual([-1, -0.5, 0, 0.5, 1]);
  });

  it("rejects a non-finite range", () => {
    expect(() => niceLinearTicks(0, Number.POSITIVE_INFINITY)).toThrow(/finite/);
  });
});

describe("log ticks", () => {
  it("uses decades when the range spans three or more", () => {
    // Hand derivation: 1e2 … 1e7 holds the six decades 10^2 … 10^7.
    const ticks = logTicks(1e2, 1e7);
    expect(values(ticks)).toEqual([1e2, 1e3, 1e4, 1e5, 1e6, 1e7]);
    expect(ticks.every((t) => t.major)).toBe(true);
  });

  it("adds 2 and 5 between decades on a short range (1-2-5)", () => {
    // Hand derivation: inside [0.002, 0.03] the 1-2-5 values are 0.002, 0.005, 0.01, 0.02; only 0.01 is a decade.
    const ticks = logTicks(0.002, 0.03);
    expect(values(ticks)).toEqual([0.002, 0.005, 0.01, 0.02]);
    expect(ticks.filter((t) => t.major).map((t) => t.value)).toEqual([0.01]);
  });

  it("thins out decades on a very long range", () => {
    // Hand derivation: 10^-3 … 10^20 is 24 decades; at most 8 major ticks keeps every 3rd.
    const ticks = logTicks(1e-3, 1e20, 8);
    expect(ticks.length).toBeLessThanOrEqual(8);
    expect(values(ticks).slice(0, 3)).toEqual([1e-3, 1, 1e3]);
  });

  it("falls back to linear ticks inside less than one 1-2-5 step", () => {
    // Hand derivation: [3, 4.5] holds no 1-2-5 value; linear step 0.5 gives 3, 3.5, 4, 4.5.
    expect(values(logTicks(3, 4.5))).toEqual([3, 3.5, 4, 4.5]);
  });

  it("marks 2 … 9 of each decade as minor ticks", () => {
    // Hand derivation: [1, 100] holds 2 … 9 and 20 … 90.
    expect(logMinorTicks(1, 100)).toEqual([2, 3, 4, 5, 6, 7, 8, 9, 20, 30, 40, 50, 60, 70, 80, 90]);
    // Hand derivation: [0.0025, 0.011] holds 0.003 … 0.009.
    expect(logMinorTicks(0.0025, 0.011)).toEqual([0.003, 0.004, 0.005, 0.006, 0.007, 0.008, 0.009]);
  });

  it("rejects ranges that touch zero", () => {
    expect(() => logTicks(0, 10)).toThrow(/positive/);
  });
});

describe("SI-prefixed labels", () => {
  it("formats with the SI prefixes", () => {
    // Prefix symbols: BIPM, The International System of Units (SI Brochure), 9th ed., 2019, Table 7.
    expect(formatSI(1000, "")).toBe("1 k");
    expect(formatSI(1e4, "")).toBe("10 k");
    expect(formatSI(1e6, "")).toBe("1 M");
    expect(formatSI(0.002, "s")).toBe("2 ms");
    expect(formatSI(2.5e-6, "s")).toBe("2.5 µs");
    expect(formatSI(1e5, "N/m")).toBe("100 kN/m");
    expect(formatSI(-0.002, "s")).toBe("−2 ms");
    expect(formatSI(0, "s")).toBe("0 s");
    expect(formatSI(20, "")).toBe("20");
  });

  it("carries rounding into the next prefix", () => {
    // Hand derivation: 999.96 to 3 significant digits is 1000 = 1 k.
    expect(formatSI(999.96, "")).toBe("1 k");
    expect(formatSI(0.00099996, "s")).toBe("1 ms");
  });

  it("prefixes the gram, not the kilogram", () => {
    // SI Brochure 9th ed. 2019, §3: prefixes attach to "gram" for mass.
    expect(formatSI(0.005, "kg")).toBe("5 g");
    expect(formatSI(2, "kg")).toBe("2 kg");
    expect(formatSI(2500, "kg")).toBe("2.5 Mg");
  });

  it("keeps milli and micro away from dimensionless values, and precision in tooltips", () => {
    // "100 m" with no unit would read as metres: plain decimals to 0.001, exponents below (our rule).
    expect(formatSI(0.1, "")).toBe("0.1");
    expect(formatSI(0.001, "")).toBe("0.001");
    expect(formatSI(-0.25, "")).toBe("−0.25");
    expect(formatSI(1e-6, "")).toBe("1e-6");
    expect(formatSI(2.5e-7, "")).toBe("2.5e-7");
    expect(formatPrecise(0.0031622776601683794, "s")).toBe("3.16228 ms");
    expect(formatSignificant(0.1 + 0.2, 6)).toBe("0.3");
  });
});
