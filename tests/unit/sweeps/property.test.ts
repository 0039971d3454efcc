/**
 * Property tests over generated specs of every scene kind (fast-check, fixed
 * seed, small sizes): a valid spec expands and every cell runs to a verdict;
 * an invalid mutation of it is rejected with the mutated field's path.
 */
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { VERDICTS } from "../../../lib/physics/types";
import { runChunkTask, unpackResults } from "../../../lib/sweeps/chunk-task";
import { axisValuesAt, cellCount, expandAxes } from "../../../lib/sweeps/grid";
import { STORED_METRIC_KEYS, resultsToJson } from "../../../lib/sweeps/results";
import { resultsHeader } from "../../../lib/sweeps/run";
import { SPEC_LIMITS, parseSweepSpec } from "../../../lib/sweeps/spec";
import { clone, type Draft } from "./fixtures";

const positive = (min: number, max: number) => fc.double({ min, max, noNaN: true, noDefaultInfinity: true });

const sceneArb = fc.oneof(
  fc.record({
    kind: fc.constant("pair"),
    massAKg: positive(0.01, 5),
    massBKg: positive(0.01, 5),
    radiusAM: positive(0.01, 0.2),
    radiusBM: positive(0.01, 0.2),
    speedAMPerS: positive(0.1, 30),
    speedBMPerS: positive(0, 10),
    offsetFraction: positive(0, 0.99),
    gapM: positive(0, 0.05),
  }),
  fc.record({
    kind: fc.constant("wall"),
    massKg: positive(0.01, 5),
    radiusM: positive(0.01, 0.2),
    speedMPerS: positive(0.1, 30),
    angleDeg: positive(0, 89),
    gapM: positive(0, 0.05),
  }),
  fc.record({
    kind: fc.constant("row"),
    count: fc.integer({ min: 1, max: 8 }),
    massKg: positive(0.01, 1),
    radiusM: positive(0.01, 0.1),
    strikerMassKg: positive(0.01, 1),
    strikerSpeedMPerS: positive(0.1, 10),
    spacingM: positive(0, 0.01),
    gapM: positive(0, 0.02),
  }),
  fc.record({
    kind: fc.constant("box"),
    count: fc.integer({ min: 1, max: 12 }),
    massKg: positive(0.01, 1),
    radiusM: positive(0.005, 0.02),
    widthM: positive(0.5, 2),
    heightM: positive(0.5, 2),
    maxSpeedMPerS: positive(0, 3),
    gravityMPerS2: fc.constantFrom(0, 9.81),
  }),
);

const contactArb = fc.oneof(
  fc.record({
    model: fc.constant("linear"),
    stiffness: positive(1e2, 1e7),
    damping: fc.oneof(
      fc.constant({ kind: "none" }),
      fc.record({ kind: fc.constant("coefficient"), value: positive(0, 5) }),
      fc.record({ kind: fc.constant("restitution"), value: positive(0.05, 1) }),
    ),
  }),
  fc.record({
    model: fc.constant("hertz"),
    material: fc.record({ youngsModulusPa: positive(1e6, 2e11), poissonRatio: positive(0, 0.49) }),
    damping: fc.oneof(fc.constant({ kind: "none" }), fc.record({ kind: fc.constant("restitution"), value: positive(0.1, 1) })),
  }),
);

/** Axes that apply to every scene and contact generated above (ranges kept small so cells stay cheap). */
const axisArb = fc.oneof(
  fc.record({ parameter: fc.constant("dtS"), spacing: fc.constant("log"), from: positive(1e-4, 1e-3), to: positive(1e-3, 1e-2), count: fc.integer({ min: 2, max: 3 }) }),
  fc.record({ parameter: fc.constant("substeps"), values: fc.constantFrom([1, 2], [1, 3, 4]) }),
  fc.record({ parameter: fc.constant("integrator"), values: fc.constantFrom(["symplectic-euler", "velocity-verlet"], ["explicit-euler"], ["velocity-verlet", "explicit-euler", "symplectic-euler"]) }),
  fc.record({ parameter: fc.constant("durationS"), spacing: fc.constant("linear"), from: positive(0.01, 0.05), to: positive(0.05, 0.1), count: fc.integer({ min: 2, max: 3 }) }),
);

const specArb = fc
  .record({
    scene: sceneArb,
    contact: contactArb,
    integrator: fc.constantFrom("symplectic-euler", "velocity-verlet", "explicit-euler"),
    dtS: positive(1e-4, 5e-3),
    substeps: fc.integer({ min: 1, max: 3 }),
    durationS: positive(0.01, 0.1),
    seed: fc.integer({ min: 0, max: 0xffffffff }),
    axes: fc.uniqueArray(axisArb, { maxLength: 3, selector: (axis) => axis.parameter }),
  })
  .map(({ axes, ...scenario }) => ({ scenario, axes }));

describe("generated specs", () => {
  it("valid ones expand and every cell runs to a verdict without throwing", () => {
    fc.assert(
      fc.property(specArb, (input) => {
        const parsed = parseSweepSpec(input);
        if (!parsed.ok) throw new Error(`rejected a valid spec: ${JSON.stringify(parsed.issues)}`);
        const axes = expandAxes(parsed.spec);
        const cells = cellCount(axes);
        expect(cells).toBe(input.axes.reduce((product, axis) => product * ("values" in axis ? axis.values.length : axis.count), 1));
        const outcome = runChunkTask({ kind: "range", chunkIndex: 0, spec: parsed.spec, firstCell: 0, cellCount: cells });
        const results = unpackResults(outcome, (index) => axisValuesAt(axes, index));
        expect(results.map((result) => result.index)).toEqual([...Array(cells).keys()]);
        for (const result of results) {
          expect(VERDICTS).toContain(result.verdict);
          expect(result.reason.length).toBeGreaterThan(0);
          expect(Object.keys(result.metrics)).toEqual([...STORED_METRIC_KEYS]);
        }
      }),
      { seed: 4242, numRuns: 40 },
    );
  });

  it("invalid mutations are rejected with the field path", () => {
    type Mutation = { name: string; apply: (spec: Draft) => string };
    const massField = (scene: Draft) => (scene.kind === "pair" ? "massAKg" : "massKg");
    const mutations: Mutation[] = [
      { name: "negative mass", apply: (spec) => ((spec.scenario.scene[massField(spec.scenario.scene)] = -1), `scenario.scene.${massField(spec.scenario.scene)}`) },
      { name: "NaN dt", apply: (spec) => ((spec.scenario.dtS = Number.NaN), "scenario.dtS") },
      { name: "infinite duration", apply: (spec) => ((spec.scenario.durationS = Number.POSITIVE_INFINITY), "scenario.durationS") },
      { name: "unknown field", apply: (spec) => ((spec.scenario.contact.friction = 0.3), "scenario.contact.friction") },
      { name: "zero radius", apply: (spec) => ((spec.scenario.scene[spec.scenario.scene.kind === "pair" ? "radiusBM" : "radiusM"] = 0), `scenario.scene.${spec.scenario.scene.kind === "pair" ? "radiusBM" : "radiusM"}`) },
      {
        name: "too many cells",
        apply: (spec) => {
          spec.axes = [
            { parameter: "dtS", spacing: "log", from: 1e-4, to: 1e-3, count: 1000 },
            { parameter: "durationS", spacing: "linear", from: 0.01, to: 0.02, count: Math.ceil(SPEC_LIMITS.maxCellsPerSweep / 1000) + 1 },
          ];
          return "axes";
        },
      },
      { name: "too many steps", apply: (spec) => ((spec.axes = [{ parameter: "dtS", values: [1e-3, 1e-9] }]), "axes.0") },
      { name: "log through zero", apply: (spec) => ((spec.axes = [{ parameter: "durationS", spacing: "log", from: -0.1, to: 0.1, count: 3 }]), "axes.0.from") },
      { name: "scene parameter of another scene", apply: (spec) => ((spec.axes = [{ parameter: spec.scenario.scene.kind === "wall" ? "scene.offsetFraction" : "scene.angleDeg", values: [1] }]), "axes.0.parameter") },
    ];
    fc.assert(
      fc.property(specArb, fc.constantFrom(...mutations), (input, mutation) => {
        const spec = clone(input);
        const field = mutation.apply(spec);
        const parsed = parseSweepSpec(spec);
        expect(parsed.ok).toBe(false);
        if (parsed.ok) return;
        expect(parsed.issues.map((issue) => issue.field)).toContain(field);
      }),
      { seed: 777, numRuns: 120 },
    );
  });

  it("any cut of the cells into chunks gives the same bytes as one chunk", () => {
    fc.assert(
      fc.property(specArb, fc.array(fc.integer({ min: 1, max: 7 }), { minLength: 1, maxLength: 30 }), (input, sizes) => {
        const parsed = parseSweepSpec(input);
        if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
        const spec = parsed.spec;
        const header = resultsHeader(spec);
        const valuesOf = (index: number) => axisValuesAt(header.axes, index);
        const whole = unpackResults(runChunkTask({ kind: "range", chunkIndex: 0, spec, firstCell: 0, cellCount: header.cellCount }), valuesOf);
        const pieces = [];
        let first = 0;
        for (let k = 0; first < header.cellCount; k++) {
          const count = Math.min(sizes[k % sizes.length], header.cellCount - first);
          // Each chunk gets its own structured copy of the spec, as a worker thread does.
          pieces.push(...unpackResults(runChunkTask({ kind: "range", chunkIndex: k, spec: structuredClone(spec), firstCell: first, cellCount: count }), valuesOf));
          first += count;
        }
        expect(resultsToJson(header, pieces)).toBe(resultsToJson(header, whole));
      }),
      { seed: 99, numRuns: 25 },
    );
  });
});
