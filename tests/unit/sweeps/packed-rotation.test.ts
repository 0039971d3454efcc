/**
 * Packed format 3 (lib/sweeps/packed.ts): the rotation metrics of friction and resting runs are
 * stored and read back exactly; runs of formats 1 and 2 stay readable with what they stored; the
 * exports carry the rotation metrics only for sweeps that measure them (other sweeps' bytes are as
 * they were); the map offers them as layers on those sweeps.
 */
import { describe, expect, it } from "vitest";
import Papa from "papaparse";
import { simulate } from "../../../lib/physics/index";
import { measuresRotation } from "../../../lib/physics/spin-metrics";
import type { Metrics, Scenario } from "../../../lib/physics/types";
import { runChunkTask, unpackResults } from "../../../lib/sweeps/chunk-task";
import { axisValuesAt, cellRange, expandAxes } from "../../../lib/sweeps/grid";
import { PackedView, PackedWriter, ROTATION_METRICS_VERSION, mergePacked } from "../../../lib/sweeps/packed";
import { METRIC_KEYS, ROTATION_METRIC_KEYS, STORED_METRIC_KEYS, pickMetrics, resultsToCsv, resultsToJson, sweepMeasuresRotation } from "../../../lib/sweeps/results";
import { resultsHeader } from "../../../lib/sweeps/run";
import { type SweepSpec, type SweepSpecInput } from "../../../lib/sweeps/spec";
import { findTemplate } from "../../../lib/sweeps/templates";
import { layerData, mapCellIndices, metricLayersFor } from "../../../components/sweeps/sweep-map-data";
import type { CellRow } from "../../../components/sweeps/sweep-api";
import type { SweepAxisView } from "../../../lib/sweeps/sweep-view";
import { puckPairSpec, parsedSpec } from "./fixtures";

function templateSpec(id: string): SweepSpec {
  const template = findTemplate(id);
  if (!template) throw new Error(`no template ${id}`);
  return parsedSpec(template.spec);
}

/** The ramp template cut to one friction value and one angle: μ 0.9 at 20° (held by friction: tan 20° = 0.364 < 0.9), k_t/k ∈ {2/7, 1, 3}. */
function rampAt20Degrees(): SweepSpec {
  const input = structuredClone(findTemplate("ramp-creep")!.spec) as SweepSpecInput;
  input.axes = [
    { parameter: "contact.friction.coefficient", values: [0.9] },
    { parameter: "scene.angleDeg", values: [20] },
    { parameter: "contact.friction.stiffnessRatio", values: [2 / 7, 1, 3] },
  ];
  return parsedSpec(input);
}

describe("packed format 3", () => {
  it("stores the rotation metrics of a friction run and reads them back exactly as the engine returned them", () => {
    const spec = rampAt20Degrees();
    const axes = expandAxes(spec);
    const outcome = runChunkTask({ kind: "range", chunkIndex: 0, spec, firstCell: 0, cellCount: 3, keys: true });
    const view = new PackedView(outcome.packed);
    expect(view.storedVersion).toBe(ROTATION_METRICS_VERSION);
    const runs = cellRange(spec, axes, 0, 3).map((cell) => simulate(cell.scenario));
    const back = unpackResults(outcome, (index) => axisValuesAt(axes, index));
    back.forEach((cell, n) => {
      expect(cell.metrics).toEqual(pickMetrics(runs[n].metrics));
      expect(Object.keys(cell.metrics)).toEqual([...STORED_METRIC_KEYS]);
      // The slope scene measures creep, the resting overlap and the settle figures; with friction on, the spin figures too.
      for (const key of ["creepM", "restingOverlapFraction", "residualKineticJ", "residualMaxSpeedMPerS", "angularMomentumDriftRel", "slidingSteps"] as const) {
        expect(cell.metrics[key]).toBe(runs[n].metrics[key]);
        expect(typeof cell.metrics[key]).toBe("number");
      }
    });
    // The creeping cell (k_t/k 3) stores the creep that decided its verdict: beyond 1 % of the radius (DEFAULT_TOLERANCES.creepFraction, our choice).
    expect(back[2].verdict).toBe("creep");
    expect(back[2].metrics.creepM as number).toBeGreaterThan(0.01 * 0.3);
    expect(back[0].verdict).toBe("stable");
    expect(back[0].metrics.creepM as number).toBeLessThanOrEqual(0.01 * 0.3);
  });

  it("stores a rotation metric the engine gave as null (a pair that never ended its contact) as null, and one it did not return as null", () => {
    const writer = new PackedWriter(2);
    const base = pickMetrics(simulate(parsedSpec(puckPairSpec()).scenario as Scenario).metrics);
    writer.add(0, "stable", "no problem found", { ...base, angularMomentumDriftRel: -0, endSlipMPerS: null, reboundAngleDeg: Number.NaN, creepM: 1e-300 } as Metrics);
    const frictionless = { ...base } as Record<string, unknown>;
    for (const key of ROTATION_METRIC_KEYS) delete frictionless[key];
    writer.add(1, "stable", "no problem found", frictionless as unknown as Metrics);
    const view = new PackedView(writer.finish());
    const first = view.metricsOf(0);
    expect(Object.is(first.angularMomentumDriftRel, -0)).toBe(true);
    expect(first.endSlipMPerS).toBeNull();
    expect(first.reboundAngleDeg).toBeNaN();
    expect(first.creepM).toBe(1e-300);
    for (const key of ROTATION_METRIC_KEYS) expect(view.metricsOf(1)[key]).toBeNull();
  });
});

describe("cells of a friction axis", () => {
  it("each have their own friction settings, and the spec's scenario keeps its own", () => {
    const spec = rampAt20Degrees();
    const cells = cellRange(spec, expandAxes(spec), 0, 3);
    expect(cells.map((cell) => cell.scenario.contact.friction?.stiffnessRatio)).toEqual([2 / 7, 1, 3]);
    expect(spec.scenario.contact.friction?.stiffnessRatio).toBe(2 / 7);
  });
});

describe("packed runs stored before the rotation metrics (format version 2)", () => {
  // Written by hand from the version-2 layout documented in lib/sweeps/packed.ts: 13 metrics a cell
  // (METRIC_KEYS: momentumDriftRelX … amplification), a 2-byte null mask, verdict codes into VERDICTS.
  function version2Blob(): Uint8Array {
    const n = 2;
    const reasons = new TextEncoder().encode("friction should hold the body at 20°, yet it moved 0.2 m\u001estable run");
    const align8 = (x: number) => (x + 7) & ~7;
    const keys = align8(32 + 4 * n);
    const metrics = align8(keys + 16 * n);
    const mask = metrics + 8 * 13 * n;
    const verdicts = mask + 2 * n;
    const bytes = new Uint8Array(verdicts + n + reasons.length);
    new Uint32Array(bytes.buffer, 0, 8).set([0x3152444b, 2, n, reasons.length, 1]);
    new Int32Array(bytes.buffer, 32, n).set([3, 8]);
    new Uint32Array(bytes.buffer, keys, 4 * n).set([11, 12, 13, 14, 15, 16, 17, 18]);
    const values = new Float64Array(bytes.buffer, metrics, 13 * n);
    for (let m = 0; m < 13; m++) {
      values[m] = m + 0.25;
      values[13 + m] = -m;
    }
    bytes[mask + 2 + 1] = 1 << 4; // cell 1, metric 12 (amplification): null
    bytes.set([9, 4], verdicts); // creep, stable
    bytes.set(reasons, verdicts + n);
    return bytes;
  }

  it("read with their verdicts, reasons, keys and 13 metrics as stored, the rotation metrics null", () => {
    const view = new PackedView(version2Blob());
    expect(view.storedVersion).toBe(2);
    expect([...view.indices]).toEqual([3, 8]);
    expect([...view.keys]).toEqual([11, 12, 13, 14, 15, 16, 17, 18]);
    expect([view.verdict(0), view.verdict(1)]).toEqual(["creep", "stable"]);
    expect(view.reason(0)).toBe("friction should hold the body at 20°, yet it moved 0.2 m");
    const first = view.metricsOf(0);
    METRIC_KEYS.forEach((key, m) => expect(first[key]).toBe(key === "tunneled" || key === "exploded" ? false : m + 0.25));
    expect(view.metricsOf(1).amplification).toBeNull();
    expect(view.metricsOf(1).maxOmegaH).toBe(-11);
    for (const key of ROTATION_METRIC_KEYS) expect(first[key]).toBeNull();
    // Copied into a new run (the cache, merges), they are written in format 3 as they were read.
    const copied = new PackedView(mergePacked(view, new PackedView(new PackedWriter(0).finish())));
    expect(copied.storedVersion).toBe(3);
    expect(copied.metricsOf(0)).toEqual(first);
    expect(copied.reason(1)).toBe("stable run");
  });
});

describe("which cells and sweeps carry the rotation metrics", () => {
  it("a scenario measures them exactly when its run returns them (friction, rolling resistance, the slope and stack scenes)", () => {
    const pair = parsedSpec(puckPairSpec()).scenario as Scenario;
    const ramp = rampAt20Degrees();
    const stack = templateSpec("stack-settle");
    const slopeWithoutFriction = cellRange(ramp, expandAxes(ramp), 0, 1)[0].scenario;
    const scenarios: Scenario[] = [
      pair,
      { ...pair, contact: { ...pair.contact, friction: { coefficient: 0.4 } } },
      { ...pair, contact: { ...pair.contact, friction: { coefficient: 0 } } },
      { ...pair, contact: { ...pair.contact, rollingResistance: 0.02 } },
      { ...slopeWithoutFriction, contact: { ...slopeWithoutFriction.contact, friction: undefined } },
      cellRange(stack, expandAxes(stack), 0, 1)[0].scenario,
    ];
    const measured = scenarios.map((scenario) => ROTATION_METRIC_KEYS.some((key) => simulate(scenario).metrics[key] !== undefined));
    expect(measured).toEqual([false, true, false, true, true, true]);
    expect(scenarios.map(measuresRotation)).toEqual(measured);
  });

  it("exports of a friction sweep carry them after the others; exports of a frictionless sweep are as in format 2", () => {
    const ramp = rampAt20Degrees();
    const rampAxes = expandAxes(ramp);
    const rampCells = unpackResults(runChunkTask({ kind: "range", chunkIndex: 0, spec: ramp, firstCell: 0, cellCount: 3 }), (index) => axisValuesAt(rampAxes, index));
    const json = JSON.parse(resultsToJson(resultsHeader(ramp), rampCells));
    expect(json.version).toBe(3);
    expect(Object.keys(json.cells[2].metrics)).toEqual([...STORED_METRIC_KEYS]);
    expect(json.cells[2].metrics.creepM).toBe(rampCells[2].metrics.creepM);
    const csv = Papa.parse<string[]>(resultsToCsv(resultsHeader(ramp), rampCells).trim(), { newline: "\r\n" }).data;
    const columns = csv[0];
    expect(columns.slice(-ROTATION_METRIC_KEYS.length)).toEqual([...ROTATION_METRIC_KEYS]);
    expect(Number(csv[3][columns.indexOf("creepM")])).toBe(rampCells[2].metrics.creepM);

    const pucks = parsedSpec(puckPairSpec());
    const puckAxes = expandAxes(pucks);
    const puckCells = unpackResults(runChunkTask({ kind: "range", chunkIndex: 0, spec: pucks, firstCell: 0, cellCount: 15 }), (index) => axisValuesAt(puckAxes, index));
    expect(sweepMeasuresRotation(pucks, puckAxes)).toBe(false);
    expect(Object.keys(JSON.parse(resultsToJson(resultsHeader(pucks), puckCells)).cells[0].metrics)).toEqual([...METRIC_KEYS]);
    expect(resultsToCsv(resultsHeader(pucks), puckCells).split("\r\n")[0].split(",").slice(-METRIC_KEYS.length)).toEqual([...METRIC_KEYS]);
  });

  it("a sweep measures them when a friction axis holds a positive value, and not when it holds only zero", () => {
    const pucks = parsedSpec(puckPairSpec());
    const axis = (values: number[]) => [{ parameter: "contact.friction.coefficient", values }];
    expect(sweepMeasuresRotation(pucks, axis([0]))).toBe(false);
    expect(sweepMeasuresRotation(pucks, axis([0, 0.2]))).toBe(true);
    expect(sweepMeasuresRotation(pucks, [{ parameter: "contact.rollingResistance", values: [0.01] }])).toBe(true);
    expect(sweepMeasuresRotation(templateSpec("stack-settle"), [])).toBe(true);
  });
});

/** The axes as a sweep view carries them (lib/queue/views.ts axisViews). */
function axisViews(spec: SweepSpec, axes = expandAxes(spec)): SweepAxisView[] {
  return axes.map((axis) => ({ path: axis.parameter, label: axis.label, unit: axis.unit, spacing: "list", values: axis.values }));
}

describe("map layers of the rotation metrics", () => {
  it("a friction sweep's map offers creep in metres, coloured from the stored values; a frictionless sweep's map does not offer it", () => {
    const ramp = rampAt20Degrees();
    const axes = expandAxes(ramp);
    const views = axisViews(ramp, axes);
    const layers = metricLayersFor(ramp, views);
    const creep = layers.find((layer) => layer.key === "creepM");
    expect(creep).toMatchObject({ label: "creep (second half)", unit: "m", normalisation: "log" });
    expect(layers.find((layer) => layer.key === "endSlipMPerS")).toMatchObject({ unit: "m/s", normalisation: "symmetric" });
    expect(metricLayersFor(parsedSpec(puckPairSpec()), axisViews(parsedSpec(puckPairSpec()))).some((layer) => layer.rotation)).toBe(false);

    const cells = unpackResults(runChunkTask({ kind: "range", chunkIndex: 0, spec: ramp, firstCell: 0, cellCount: 3 }), (index) => axisValuesAt(axes, index));
    const rows = new Map<number, CellRow>(cells.map((cell) => [cell.index, { index: cell.index, axisValues: cell.axisValues, metrics: cell.metrics, verdict: cell.verdict, reason: cell.reason }]));
    // x: k_t/k (three values), one row.
    const indices = mapCellIndices(views, { x: 2, y: -1, slice: [0, 0, 0] });
    const data = layerData(indices, rows, "creepM");
    expect(data.values).toEqual(cells.map((cell) => cell.metrics.creepM));
    expect(data.verdicts).toEqual(["stable", cells[1].verdict, "creep"]);
    // The creeping cell is the largest on the creep layer.
    expect(Math.max(...(data.values as number[]))).toBe(data.values[2]);
  });
});
