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
import { bumperWallSpec, puckPairSpec, parsedSpec } from "./fixtures";

function keyOf(scenario: Scenario): number[] {
  const out = new Uint32Array(KEY_WORDS);
  scenarioKey(scenario, out);
  return [...out];
}

describe("packed results", () => {
  it("round-trip the engine's results exactly, with keys, whatever the values (NaN, ±Infinity, −0, null, booleans)", () => {
    const spec = parsedSpec(puckPairSpec());
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
    const spec = parsedSpec(puckPairSpec());
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
    const spec = parsedSpec(puckPairSpec());
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
    const outcome = runChunkTask({ kind: "range", chunkIndex: 0, spec: parsedSpec(bumperWallSpec()), firstCell: 0, cellCount: 3 });
    expect(() => new PackedView(outcome.packed.subarray(0, outcome.packed.length - 1))).toThrow(/bytes where the header describes/);
    expect(() => new PackedView(new Uint8Array(64))).toThrow(/unknown format/);
  });
});

describe("packed runs stored before verdict rules 2 (format version 1)", () => {
  // Written by hand from the version-1 layout documented in lib/sweeps/packed.ts: 11 metrics a cell
  // (momentumDriftRelX … steps), a 2-byte null mask, verdict codes 0–4 (exploded … stable).
  function version1Blob(): Uint8Array {
    const n = 2;
    const reasons = new TextEncoder().encode("energy rose 3% over the run (limit 1%)\u001estable run");
    const align8 = (x: number) => (x + 7) & ~7;
    const keys = align8(32 + 4 * n);
    const metrics = align8(keys + 16 * n);
    const mask = metrics + 8 * 11 * n;
    const verdicts = mask + 2 * n;
    const bytes = new Uint8Array(verdicts + n + reasons.length);
    const header = new Uint32Array(bytes.buffer, 0, 8);
    header.set([0x3152444b, 1, n, reasons.length, 1]);
    new Int32Array(bytes.buffer, 32, n).set([4, 9]);
    new Uint32Array(bytes.buffer, keys, 4 * n).set([1, 2, 3, 4, 5, 6, 7, 8]);
    const values = new Float64Array(bytes.buffer, metrics, 11 * n);
    for (let m = 0; m < 11; m++) {
      values[m] = m + 0.5;
      values[11 + m] = -m;
    }
    bytes[mask + 0] = 1 << 4; // cell 0: effectiveRestitution null
    bytes.set([3, 4], verdicts); // energy-drift, stable
    bytes.set(reasons, verdicts + n);
    return bytes;
  }

  it("read with their verdicts, reasons, keys and metrics as stored, the newer metrics null", () => {
    const view = new PackedView(version1Blob());
    expect(view.count).toBe(2);
    expect([...view.indices]).toEqual([4, 9]);
    expect(view.hasKeys).toBe(true);
    expect([...view.keys]).toEqual([1, 2, 3, 4, 5, 6, 7, 8]);
    expect([view.verdict(0), view.verdict(1)]).toEqual(["energy-drift", "stable"]);
    expect(view.reason(0)).toBe("energy rose 3% over the run (limit 1%)");
    const first = view.metricsOf(0);
    expect(first.momentumDriftRelX).toBe(0.5);
    expect(first.effectiveRestitution).toBeNull();
    expect(first.steps).toBe(10.5);
    expect(first.maxOmegaH).toBeNull();
    expect(first.amplification).toBeNull();
    expect(view.metricsOf(1).contactSteps).toBe(-7);
    // Copied into a new run (the cache, merges), they stay as they were.
    expect(new PackedView(mergePacked(view, new PackedView(new PackedWriter(0).finish()))).verdict(0)).toBe("energy-drift");
  });
});

describe("scenario keys", () => {
  const base = parsedSpec(bumperWallSpec()).scenario;

  function firstCell(input: unknown): Scenario {
    const spec = parsedSpec(input);
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
    // Cells judged by verdict rules 1: every stored result before the rules were versioned (their
    // stored specs have no verdictRules; a spec may also ask for 1). Their keys are the released ones.
    const rules1 = <T extends { scenario: object }>(spec: T) => ({ ...spec, scenario: { ...spec.scenario, verdictRules: 1 } });
    expect(keyOf(firstCell(rules1(puckPairSpec() as { scenario: object })))).toEqual([0x8d54f120, 0x22240c91, 0xdfb75148, 0x6a446b1b]);
    expect(keyOf(firstCell(rules1(bumperWallSpec() as { scenario: object })))).toEqual([0xa8e591b7, 0xc9ffd09b, 0xa6312c37, 0xca357ce4]);
    expect(keyOf(firstCell(rules1(box)))).toEqual([0x65550550, 0xb40de569, 0x935b08e4, 0x849c4c3e]);
    expect(keyOf(firstCell(rules1(snapshot)))).toEqual([0x298ecd32, 0x4b5308f6, 0x475f4841, 0x7139ff69]);
    // A stored spec has no verdictRules field at all: same key as rules 1.
    const stored = { ...firstCell(rules1(puckPairSpec() as { scenario: object })) };
    delete stored.verdictRules;
    expect(keyOf(stored)).toEqual([0x8d54f120, 0x22240c91, 0xdfb75148, 0x6a446b1b]);
    // New sweeps are judged by rules 2 (the default): their keys carry the version and the tolerances
    // it added, so a cell judged by rules 1 never serves them. Values as first released with rules 2.
    expect(keyOf(firstCell(puckPairSpec()))).toEqual([0xc892b111, 0x74ec2c13, 0x8fb65498, 0xdfe1b824]);
    // Rules 3 (the default since) change only Hertz cells (the contact end): a Hertz cell under rules 3
    // has a key of its own, a linear one keeps its rules-2 key (puckPair and box above are linear).
    const rules2 = <T extends { scenario: object }>(spec: T) => ({ ...spec, scenario: { ...spec.scenario, verdictRules: 2 } });
    expect(keyOf(firstCell(rules2(bumperWallSpec() as { scenario: object })))).toEqual([0x4bbb015f, 0x7a697f0a, 0x5b63bb52, 0x69a1505e]);
    expect(keyOf(firstCell(rules2(puckPairSpec() as { scenario: object })))).toEqual([0xc892b111, 0x74ec2c13, 0x8fb65498, 0xdfe1b824]);
    expect(keyOf(firstCell(bumperWallSpec()))).toEqual([0x23b4ce12, 0x3b743a2e, 0xc4a44c49, 0xa69813e2]);
    // A named wall is keyed (absent keys as before): rigid and disc-material differ from each other and from absent.
    const withWall = (wall: string) => { const spec = bumperWallSpec() as { scenario: { contact: object } }; return { ...spec, scenario: { ...spec.scenario, contact: { ...spec.scenario.contact, wall } } }; };
    const wallKeys = [keyOf(firstCell(withWall("rigid"))), keyOf(firstCell(withWall("disc-material"))), keyOf(firstCell(bumperWallSpec()))].map((key) => key.join(","));
    expect(new Set(wallKeys).size).toBe(3);
    expect(keyOf(firstCell(box))).toEqual([0x738b20bd, 0x4ca20e06, 0x4ad9bc62, 0x8299ded2]);
    const stricter = firstCell({ ...box, scenario: { ...box.scenario, tolerances: { energyDriftRel: 0.01, maxOverlapFraction: 0.1, blowUpEnergyFactor: 1000, restitutionRel: 0.02 } } });
    expect(keyOf(stricter)).not.toEqual(keyOf(firstCell(box)));
    // Friction (issue #15): a scenario without friction, rolling resistance or spins keeps the key
    // pinned above; each friction setting gives a key of its own.
    const puck = firstCell(puckPairSpec());
    expect(keyOf(puck)).toEqual([0xc892b111, 0x74ec2c13, 0x8fb65498, 0xdfe1b824]);
    const withFriction = (friction: Record<string, number>, extra: Record<string, unknown> = {}) => keyOf({ ...puck, contact: { ...puck.contact, friction, ...extra } } as unknown as Scenario);
    const frictionKeys = [
      withFriction({ coefficient: 0.4 }),
      withFriction({ coefficient: 0.5 }),
      withFriction({ coefficient: 0.4, stiffnessRatio: 1 }),
      withFriction({ coefficient: 0.4, dampingRatio: 0.2 }),
      withFriction({ coefficient: 0.4 }, { rollingResistance: 0.01 }),
      keyOf({ ...puck, scene: { ...puck.scene, spinARadPerS: 3 } } as Scenario),
    ].map((key) => key.join(","));
    expect(new Set([...frictionKeys, keyOf(puck).join(",")]).size).toBe(frictionKeys.length + 1);
  });

  it("are equal for equal scenarios in any key order, and for −0 and 0", () => {
    const reordered = JSON.parse(JSON.stringify({ seed: base.seed, verdictRules: base.verdictRules, tolerances: base.tolerances, durationS: base.durationS, substeps: base.substeps, dtS: base.dtS, integrator: base.integrator, contact: base.contact, scene: base.scene })) as Scenario;
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
    const spec = parsedSpec({ ...puckPairSpec(), axes: [
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
