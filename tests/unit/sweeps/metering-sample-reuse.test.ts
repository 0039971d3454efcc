/**
 * The expected figure's sample units handed from a quote to its submit (lib/sweeps/metering.ts
 * meterSweep's `known`): the figures are the same as a fresh sample's, and remembered units are
 * really what the figure is made of (nothing is run twice).
 */
import { describe, expect, it } from "vitest";
import { planChunks } from "../../../lib/sweeps/chunks";
import { meterSweep } from "../../../lib/sweeps/metering";
import { METERING_SPECS as SPECS } from "./metering-fixtures";

describe("sample units reused between a quote and its submit", () => {
  it("give the same ceiling and expected figures as a fresh sample, and are what the figure is made of", () => {
    const spec = SPECS[0][1];
    const plan = planChunks(spec);
    const fresh = meterSweep(spec, plan);
    const known = new Map<number, number>();
    // The quote: runs the sample and remembers each sampled cell's units.
    const quoted = meterSweep(spec, plan, undefined, undefined, known);
    expect(quoted).toEqual(fresh);
    expect(known.size).toBe(fresh.sampledCells);
    expect(fresh.sampledCells).toBeGreaterThan(0);
    // The submit: the same figures from the remembered units.
    const submitted = meterSweep(spec, plan, undefined, undefined, known);
    expect(submitted).toEqual(fresh);
    // The remembered units are used as they are: doubling them doubles the expected units.
    const doubled = new Map([...known].map(([index, units]) => [index, units * 2]));
    expect(meterSweep(spec, plan, undefined, undefined, doubled).expectedUnits).toBe(2 * fresh.expectedUnits);
  });
});
