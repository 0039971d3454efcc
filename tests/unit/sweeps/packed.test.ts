/**
 * The packed chunk results (lib/sweeps/packed.ts) and the scenario keys of the result cache
 * (lib/sweeps/cell-key.ts): what the worker writes reads back exactly, merges keep index order,
 * and keys are equal exactly when scenarios are.
 */
import { describe, expect, it } from "vitest";
import { simulate } from "../../../lib/physics/index";
import type { Metrics, Scenario } from "../../../lib/physics/types";
import { KeyTable, scenarioKey } from "../../../lib/sweeps/cell-key";
import { runChunkTask, unpackResults } from "../../../lib/sweeps/chunk-task";
import { axisValuesAt, cellRange, expandAxes } from "../../../lib/sweeps/grid";
import { KEY_WORDS, PackedView, PackedWriter, mergePacked, verdictTally } from "../../../lib/sweeps/packed";
import { pickMetrics } from "../../../lib/sweeps/results";
import { parseSweepSpec, type SweepSpec } from "../../../lib/sweeps/spec";
import { bumperWallSpec, puckPairSpec } from "./fixtures";

function parsed(input: unknown): SweepSpec {
  const result = parseSweepSpec(input);
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  return result.spec;
}

function keyOf(scenario: Scenario): number[] {
  const out = new Uint32Array(KEY_WORDS);
  scenarioKey(scenario, out);
  return [...out];
}

describe("packed results", () => {
  it("round-trip the engine's results exactly, with keys, whatever the values (NaN, ±Infinity, −0, null, booleans)", () => {
    const spec = parsed(puckPairSpec());
    const axes = expandAxes(spec);
    const outcome = runChunkTask({ kind: "range", chunkIndex: 0, spec, firstCell: 0, cellCount: 15, keys: true });
    const runs = cellRange(spec, axes, 0, 15).map((cell) => simulate(cell.scenario));
    expect(unpackResults(outcome, (index) => axisValuesAt(axes, index))).toEqual(
      runs.map((run, index) => ({ index, axisValues: axisValuesAt(axes, index), verdict: run.verdict, reason: run.reason, metrics: pickMetrics(run.metrics) })),
    );
    const view = new PackedView(outcome.packed);
    expect(view.hasKeys).toBe(true);
    cellRange(spec, axes, 0, 15).forEach((cell, n) => expect([...view.keys.subarray(n * 4, n * 4 + 4)]).toEqual(keyOf(cell.scenario)));

    // Values the engine may return at the edges: written and read back bit for bit.
    const edge = { ...pickMetrics(runs[0].metrics), energyErrorRel: Number.NaN, maxEnergyErrorRel: Number.POSITIVE_INFINITY, momentumDriftRelX: -0, effectiveRestitution: null, contactDurationS: null, tunneled: true, exploded: false } as Metrics;
    const writer = new PackedWriter(1);
    writer.add(7, "exploded", "energy grew ×1e6 — see “why”", edge);
    const back = new PackedView(writer.finish()).result(0, () => []);
    expect(back.metrics).toEqual(edge);
    expect(Object.is(back.metrics.momentumDriftRelX, -0)).toBe(true);
    expect(back.reason).toBe("energy grew ×1e6 — see “why”");
    expect(back.verdict).toBe("exploded");
  });

  it("merges two runs with disjoint cells in index order; skipped cells are the ones left out", () => {
    const spec = parsed(puckPairSpec());
    const axes = expandAxes(spec);
    const whole = runChunkTask({ kind: "range", chunkIndex: 0, spec, firstCell: 0, cellCount: 15, keys: true });
    const skip = Int32Array.from([0, 3, 4, 9, 14]);
    const rest = runChunkTask({ kind: "range", chunkIndex: 0, spec, firstCell: 0, cellCount: 15, skip, keys: true });
    expect(rest.cellCount).toBe(10);
    expect([...new PackedView(rest.packed).indices]).toEqual([1, 2, 5, 6, 7, 8, 10, 11, 12, 13]);
    const wholeView = new PackedView(whole.packed);
    const cached = new PackedWriter(skip.length);
    for (const index of skip) cached.copyFrom(wholeView, wholeView.find(index));
    const merged = mergePacked(new PackedView(cached.finish()), new PackedView(rest.packed));
    expect(Buffer.from(merged).equals(Buffer.from(whole.packed))).toBe(true);
    expect(verdictTally(new PackedView(merged)).reduce((a, b) => a + b, 0)).toBe(15);
    expect(() => mergePacked(wholeView, wholeView)).toThrow(/in both runs/);
    void axes;
  });

  it("a merge of a keyed run with one not keyed has no keys (a zero key is no key); keying it afterwards gives the keys of a keyed run", () => {
    const spec = parsed(puckPairSpec());
    const keyed = runChunkTask({ kind: "range", chunkIndex: 0, spec, firstCell: 0, cellCount: 15, skip: Int32Array.from([1, 2]), keys: true });
    const plain = runChunkTask({ kind: "range", chunkIndex: 0, spec, firstCell: 1, cellCount: 2 });
    const merged = new PackedView(mergePacked(new PackedView(keyed.packed), new PackedView(plain.packed)));
    expect(merged.count).toBe(15);
    expect(merged.hasKeys).toBe(false);
    // Keyed on the pool later (the queue's idle-time keying): the same bytes as a run keyed from the start.
    const later = runChunkTask({ kind: "keys", chunkIndex: 0, spec, packed: mergePacked(new PackedView(keyed.packed), new PackedView(plain.packed)) });
    const fromStart = runChunkTask({ kind: "range", chunkIndex: 0, spec, firstCell: 0, cellCount: 15, keys: true });
    expect(new PackedView(later.packed).hasKeys).toBe(true);
    expect([...new PackedView(later.packed).keys]).toEqual([...new PackedView(fromStart.packed).keys]);
    expect(later.packed).toEqual(fromStart.packed);
  });

  it("refuses bytes that are not a packed run of the length they claim", () => {
    const outcome = runChunkTask({ kind: "range", chunkIndex: 0, spec: parsed(bumperWallSpec()), firstCell: 0, cellCount: 3 });
    expect(() => new PackedView(outcome.packed.subarray(0, outcome.packed.length - 1))).toThrow(/bytes where the header describes/);
    expect(() => new PackedView(new Uint8Array(64))).toThrow(/unknown format/);
  });
});

describe("scenario keys", () => {
  const base = parsed(bumperWallSpec()).scenario;

  function firstCell(input: unknown): Scenario {
    const spec = parsed(input);
    return cellRange(spec, expandAxes(spec), 0, 1)[0].scenario;
  }

  // Stored results are matched by these keys in later sweeps: a change to the key function (field
  // order, encoding, hash) would make every studio's stored results miss the cache and be billed
  // again. The values are those of the key function as first released (its own output; no outside
  // source); change them only with a deliberate re-keying of stored results.
  it("keep the values they were first released with, for every scene kind", () => {
    const box = { name: "Jellybean Jar", scenario: { scene: { kind: "box", count: 12, massKg: 0.05, radiusM: 0.03, widthM: 1, heightM: 0.8, maxSpeedMPerS: 1, gravityMPerS2: 9.81 }, contact: { model: "linear", stiffness: 1e4, damping: { kind: "coefficient", value: 0.5 } }, integrator: "velocity-verlet", dtS: 1e-3, durationS: 0.5, seed: 7 }, axes: [] };
    const snapshot = {
      name: "Loading bay crates",
      scenario: {
        scene: { kind: "snapshot", bodies: [{ xM: 0, yM: 1, vxMPerS: 1, vyMPerS: 0, massKg: 2, radiusM: 0.2 }, { xM: 0.5, yM: 1.1, vxMPerS: -0.5, vyMPerS: 0, massKg: 1, radiusM: 0.15 }], walls: [{ normalX: 0, normalY: 1, offsetM: 0 }], gravityMPerS2: 9.81, speedScale: 1 },
        contact: { model: "linear", stiffness: 1e5, damping: { kind: "restitution", value: 0.5 } },
        integrator: "symplectic-euler",
        dtS: 1e-3,
        durationS: 0.2,
      },
      axes: [],
    };
    expect(keyOf(firstCell(puckPairSpec()))).toEqual([0x8d54f120, 0x22240c91, 0xdfb75148, 0x6a446b1b]);
    expect(keyOf(firstCell(bumperWallSpec()))).toEqual([0xa8e591b7, 0xc9ffd09b, 0xa6312c37, 0xca357ce4]);
    expect(keyOf(firstCell(box))).toEqual([0x65550550, 0xb40de569, 0x935b08e4, 0x849c4c3e]);
    expect(keyOf(firstCell(snapshot))).toEqual([0x298ecd32, 0x4b5308f6, 0x475f4841, 0x7139ff69]);
  });

  it("are equal for equal scenarios in any key order, and for −0 and 0", () => {
    const reordered = JSON.parse(JSON.stringify({ seed: base.seed, tolerances: base.tolerances, durationS: base.durationS, substeps: base.substeps, dtS: base.dtS, integrator: base.integrator, contact: base.contact, scene: base.scene })) as Scenario;
    expect(keyOf(reordered)).toEqual(keyOf(base));
    const zero = { ...base, scene: { ...base.scene, angleDeg: 0 } } as Scenario;
    const negativeZero = { ...base, scene: { ...base.scene, angleDeg: -0 } } as Scenario;
    expect(keyOf(negativeZero)).toEqual(keyOf(zero));
  });

  it("differ when any one field differs, including the last bit of a number and an absent optional field", () => {
    const variants: Scenario[] = [
      { ...base, dtS: base.dtS * (1 + Number.EPSILON) },
      { ...base, seed: base.seed + 1 },
      { ...base, integrator: "explicit-euler" },
      { ...base, contact: { ...base.contact, material: undefined, stiffness: 1e9 } },
      { ...base, contact: { ...base.contact, damping: { kind: "restitution", value: 0.9 } } },
      { ...base, tolerances: { ...base.tolerances, energyDriftRel: base.tolerances.energyDriftRel * 2 } },
      { ...base, scene: { ...base.scene, gapM: 0.003 } } as Scenario,
    ];
    const keys = [base, ...variants].map((scenario) => keyOf(scenario).join(","));
    expect(new Set(keys).size).toBe(keys.length);
  });

  it("a key table finds every key it holds and no other (65,536 keys of a grid)", () => {
    const spec = parsed({ ...puckPairSpec(), axes: [
      { parameter: "contact.stiffness", spacing: "log", from: 1e3, to: 1e7, count: 256 },
      { parameter: "scene.speedAMPerS", spacing: "log", from: 0.5, to: 20, count: 256 },
    ] });
    const axes = expandAxes(spec);
    const keys = new Uint32Array(65_536 * KEY_WORDS);
    cellRange(spec, axes, 0, 65_536).forEach((cell) => scenarioKey(cell.scenario, keys, cell.index * KEY_WORDS));
    const table = new KeyTable(32_768);
    for (let i = 0; i < 32_768; i++) expect(table.insert(keys, i * KEY_WORDS, i)).toBe(i);
    expect(table.size).toBe(32_768); // no two cells of the grid share a key
    for (let i = 0; i < 65_536; i += 97) expect(table.get(keys, i * KEY_WORDS)).toBe(i < 32_768 ? i : -1);
  });
});
