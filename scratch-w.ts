import { parseSweepSpec } from "@/lib/sweeps/spec";
import { runChunkTask } from "@/lib/sweeps/chunk-task";
const input = { name: "bench", scenario: { scene: { kind: "pair", massAKg: 0.38, massBKg: 0.38, radiusAM: 0.026, radiusBM: 0.026, speedAMPerS: 3, speedBMPerS: 0, offsetFraction: 0, gapM: 0.01 }, contact: { model: "linear", stiffness: 1e5, damping: { kind: "restitution", value: 0.7 } }, integrator: "symplectic-euler", dtS: 1e-3, substeps: 1, durationS: 4 },
    axes: [ { parameter: "contact.stiffness", spacing: "log", from: 1e3, to: 1e6, count: 64 }, { parameter: "scene.speedAMPerS", spacing: "log", from: 0.5, to: 20, count: 64 }, { parameter: "scene.offsetFraction", spacing: "linear", from: 0, to: 0.95, count: 16 } ] };
const r = parseSweepSpec(input); if (!r.ok) throw 1; const spec = r.spec;
for (let k = 0; k < 4; k++) for (const keys of [false, true]) {
  const o = runChunkTask({ kind: "range", chunkIndex: 0, spec, firstCell: 4096 * (k + 2), cellCount: 4096, keys });
  console.log(keys, o.computeMs, o.packed.length);
}
