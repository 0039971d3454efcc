import { describe, expect, it } from "vitest";
import Papa from "papaparse";
import type { Metrics } from "../../../lib/physics/types";
import type { ExpandedAxis } from "../../../lib/sweeps/grid";
import {
  METRIC_KEYS,
  formatNumber,
  jsonResultsEncoder,
  resultsToCsv,
  resultsToJson,
  type CellResult,
  type ResultsHeader,
} from "../../../lib/sweeps/results";

function metrics(overrides: Partial<Metrics> = {}): Metrics {
  return {
    momentumDriftRelX: 1e-16,
    momentumDriftRelY: -0,
    energyErrorRel: -0.36,
    maxEnergyErrorRel: 0.004,
    effectiveRestitution: 0.8000000000000002,
    maxOverlapFraction: 0.05,
    contactDurationS: 0.0031,
    contactSteps: 13,
    tunneled: false,
    exploded: false,
    steps: 96,
    maxOmegaH: 0.12,
    amplification: 1.0000000000000002,
    ...overrides,
  };
}

const axes: ExpandedAxis[] = [
  { parameter: "contact.stiffness", label: "contact stiffness k", unit: "N/m", values: [1e3, 1e7] },
  { parameter: "integrator", label: "integrator", unit: "", values: ["symplectic-euler"] },
];
const header: ResultsHeader = { name: "Puckyard, rink \"B\"", specHash: "ab".repeat(32), verdictRules: 2, axes, cellCount: 2 };
const cells: CellResult[] = [
  { index: 0, axisValues: [1e3, "symplectic-euler"], verdict: "stable", reason: "no problem found", metrics: metrics() },
  {
    index: 1,
    axisValues: [1e7, "symplectic-euler"],
    verdict: "exploded",
    reason: "=HYPERLINK(\"x\"), energy grew ×1e6\nat t = 0.12 s",
    metrics: metrics({ energyErrorRel: Number.POSITIVE_INFINITY, maxEnergyErrorRel: Number.NaN, effectiveRestitution: null, contactDurationS: null, exploded: true }),
  },
];

describe("JSON results", () => {
  it("parse back to the same records, with fixed key order and non-finite numbers as null", () => {
    const text = resultsToJson(header, cells);
    const document = JSON.parse(text);
    expect(Object.keys(document)).toEqual(["format", "version", "name", "specHash", "verdictRules", "cellCount", "axes", "cells", "verdictCounts"]);
    expect(document.verdictRules).toBe(2);
    expect(document.cells[0]).toEqual({
      index: 0,
      parameters: { "contact.stiffness": 1000, integrator: "symplectic-euler" },
      verdict: "stable",
      reason: "no problem found",
      metrics: { ...metrics(), momentumDriftRelY: 0 },
    });
    expect(Object.keys(document.cells[1].metrics)).toEqual([...METRIC_KEYS]);
    expect(document.cells[1].metrics.energyErrorRel).toBeNull();
    expect(document.cells[1].metrics.maxEnergyErrorRel).toBeNull();
    expect(document.cells[1].reason).toBe(cells[1].reason);
    expect(document.verdictCounts).toEqual({ exploded: 1, tunneled: 0, "deep-overlap": 0, "energy-drift": 0, stable: 1, "step-unstable": 0, "restitution-off": 0, "coarse-contact": 0, jitter: 0, creep: 0, sinking: 0 });
    expect(document.name).toBe(header.name);
  });

  it("write numbers in shortest round-trip form", () => {
    // Reference: ECMAScript's Number::toString, the shortest digits that read back to the same double (ECMA-262).
    for (const value of [0.1, 1 / 3, 1e-300, 123456789012345680000, -2.5e-7, 5e-324]) {
      expect(Number(formatNumber(value))).toBe(value);
      expect(formatNumber(value)).toBe(String(value));
    }
    expect(formatNumber(-0)).toBe("0");
    expect(formatNumber(Number.NaN)).toBe("null");
  });

  it("are the same bytes whether written in one piece or chunk by chunk", () => {
    const encoder = jsonResultsEncoder(header);
    const pieced = encoder.head() + encoder.cells([cells[0]]) + encoder.cells([cells[1]]) + encoder.tail();
    expect(pieced).toBe(resultsToJson(header, cells));
  });

  it("refuse cells out of order or missing", () => {
    expect(() => resultsToJson(header, [cells[1], cells[0]])).toThrow(/out of order/);
    expect(() => resultsToJson(header, [cells[0]])).toThrow(/hold 1 cells; the sweep has 2/);
  });
});

describe("CSV results", () => {
  it("read back with an RFC 4180 parser (papaparse) to the same fields", () => {
    const text = resultsToCsv(header, cells);
    expect(text.endsWith("\r\n")).toBe(true);
    const parsed = Papa.parse<string[]>(text.slice(0, -2), { newline: "\r\n" });
    expect(parsed.errors).toEqual([]);
    const [head, first, second] = parsed.data;
    expect(head).toEqual(["index", "contact.stiffness", "integrator", "verdict", "reason", ...METRIC_KEYS]);
    expect(first.slice(0, 5)).toEqual(["0", "1000", "symplectic-euler", "stable", "no problem found"]);
    expect(first[head.indexOf("momentumDriftRelY")]).toBe("0");
    expect(first[head.indexOf("energyErrorRel")]).toBe("-0.36"); // a number keeps its sign, unguarded
    // Formula-looking text gets a leading quote; the comma, quotes and newline survive quoting.
    expect(second[4]).toBe(`'${cells[1].reason}`);
    expect(second[head.indexOf("energyErrorRel")]).toBe("");
    expect(second[head.indexOf("effectiveRestitution")]).toBe("");
    expect(second[head.indexOf("exploded")]).toBe("true");
  });
});
