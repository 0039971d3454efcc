/**
 * Small specs of invented game scenes used across the sweep tests.
 * "Puckyard" is an invented studio making an air-hockey game; "Bumper Lane" an
 * invented pinball-like table.
 */
import { parseSweepSpec, type SweepSpec, type SweepSpecInput } from "../../../lib/sweeps/spec";

/** A hockey puck (0.17 kg, 4 cm) hitting a heavier striker head-on (also the integration tests' puckSpec). */
export function puckPairSpec(): SweepSpecInput {
  return {
    name: "Puckyard puck vs striker",
    scenario: {
      scene: { kind: "pair", massAKg: 0.17, massBKg: 0.4, radiusAM: 0.04, radiusBM: 0.05, speedAMPerS: 6, speedBMPerS: 0, offsetFraction: 0, gapM: 0.01 },
      contact: { model: "linear", stiffness: 2e5, damping: { kind: "restitution", value: 0.8 } },
      integrator: "symplectic-euler",
      dtS: 1 / 240,
      substeps: 4,
      durationS: 0.1,
    },
    axes: [
      { parameter: "contact.stiffness", spacing: "log", from: 1e3, to: 1e7, count: 5 },
      { parameter: "dtS", spacing: "log", from: 1 / 960, to: 1 / 60, count: 3 },
    ],
  };
}

/** A steel ball of a pinball-like table hitting a rail (the wall) at an angle. */
export function bumperWallSpec(): SweepSpecInput {
  return {
    scenario: {
      scene: { kind: "wall", massKg: 0.08, radiusM: 0.0135, speedMPerS: 3, angleDeg: 30, gapM: 0.002 },
      contact: { model: "hertz", material: { youngsModulusPa: 2e11, poissonRatio: 0.3 }, damping: { kind: "none" } },
      integrator: "velocity-verlet",
      dtS: 1e-4,
      durationS: 0.01,
    },
    axes: [{ parameter: "integrator", values: ["symplectic-euler", "velocity-verlet", "explicit-euler"] }],
  };
}

/** A small box of discs (a ball pit of an invented party game). */
export function ballPitBoxSpec(): SweepSpecInput {
  return {
    scenario: {
      scene: { kind: "box", count: 20, massKg: 0.05, radiusM: 0.03, widthM: 1, heightM: 1, maxSpeedMPerS: 1, gravityMPerS2: 9.81 },
      contact: { model: "linear", stiffness: 1e4, damping: { kind: "coefficient", value: 0.5 } },
      integrator: "velocity-verlet",
      dtS: 1e-3,
      durationS: 0.05,
      seed: 7,
    },
    axes: [{ parameter: "scene.count", spacing: "linear", from: 10, to: 30, count: 3 }],
  };
}

/** Deep copy for mutations. */
export function clone<T>(value: T): T {
  return JSON.parse(JSON.stringify(value)) as T;
}

/**
 * A spec being bent out of shape on purpose (wrong types, unknown fields, deleted keys):
 * the whole point of these tests is input the types forbid.
 */
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- deliberately untyped test input
export type Draft = any;

/**
 * A snapshot scene as a game would export it: twelve crates (discs) of an invented warehouse game
 * dropped on the floor and one side wall, some moving; swept over stiffness and speed scale.
 */
export function crateDropSnapshotSpec(): SweepSpecInput {
  const bodies = Array.from({ length: 12 }, (_, i) => ({
    xM: 0.15 + (i % 4) * 0.2,
    yM: 0.12 + Math.floor(i / 4) * 0.22,
    vxMPerS: ((i * 5) % 3) * 0.3 - 0.3,
    vyMPerS: -0.5,
    massKg: 2 + (i % 3),
    radiusM: 0.08,
  }));
  return {
    name: "Crate drop",
    scenario: {
      scene: { kind: "snapshot", bodies, walls: [{ normalX: 0, normalY: 1, offsetM: 0 }, { normalX: 1, normalY: 0, offsetM: 0 }], gravityMPerS2: 9.81 },
      contact: { model: "linear", stiffness: 2e5, damping: { kind: "restitution", value: 0.5 } },
      integrator: "velocity-verlet",
      dtS: 1e-3,
      durationS: 0.1,
    },
    axes: [
      { parameter: "contact.stiffness", spacing: "log", from: 2e4, to: 2e6, count: 3 },
      { parameter: "scene.speedScale", spacing: "linear", from: 0.5, to: 2, count: 2 },
    ],
  };
}

/** The parsed spec; a fixture that does not parse throws with its issues (the test is then broken, not red). */
export function parsedSpec(input: unknown): SweepSpec {
  const result = parseSweepSpec(input);
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  return result.spec;
}
