/**
 * 128-bit keys of cell scenarios, for the per-studio result cache: two cells get the same key
 * when their scenarios are equal field by field (numbers by their IEEE 754 bits, −0 as 0).
 *
 * The scenario's fields are written as 32-bit words in a fixed order (each scene kind's fields
 * listed below; an absent optional field writes a marker of its own) and hashed by four
 * MurmurHash3-style lanes with distinct seeds and rotations, finished by fmix32 with cross-lane
 * mixing. Integer-only arithmetic: the same key on every platform and thread. About 0.6 µs a
 * pair cell on its own, 1.4–3.7 µs interleaved with the simulation (up to a third of a cheap
 * pair cell's compute), so the queue keys stored results in idle time, not while a sweep runs
 * (lib/queue/runner.ts keyStored; lib/queue/submit.ts keys a stored run not keyed yet itself).
 * Not a cryptographic hash: it identifies a studio's own results to that studio. The values are pinned by tests/unit/sweeps/packed.test.ts: changing
 * them makes every stored result miss the cache.
 *
 * Pure: safe to import anywhere.
 */
import type { BoxScene, PairScene, RowScene, Scenario, SceneKind, SlopeScene, SnapshotBody, SnapshotScene, SnapshotWall, StackScene, WallScene } from "../physics/types";
import { fmix32 } from "./canonical";

type Fields<T> = readonly Exclude<keyof T, "kind">[];
// Every numeric field of every scene kind (a field added to a scene type fails the check below).
const SCENE_FIELDS = {
  pair: ["massAKg", "massBKg", "radiusAM", "radiusBM", "speedAMPerS", "speedBMPerS", "offsetFraction", "gapM"] as Fields<PairScene>,
  wall: ["massKg", "radiusM", "speedMPerS", "angleDeg", "gapM"] as Fields<WallScene>,
  row: ["count", "massKg", "radiusM", "strikerMassKg", "strikerSpeedMPerS", "spacingM", "gapM"] as Fields<RowScene>,
  box: ["count", "massKg", "radiusM", "widthM", "heightM", "maxSpeedMPerS", "gravityMPerS2"] as Fields<BoxScene>,
  // The snapshot's scalar fields; its bodies and walls are written after them, each in this order.
  snapshot: ["gravityMPerS2", "speedScale"] as readonly Exclude<keyof SnapshotScene, "kind" | "bodies" | "walls">[],
  // The slope's `body` (a string) is written with the friction settings below.
  slope: ["massKg", "radiusM", "angleDeg", "speedMPerS", "spinRadPerS", "gravityMPerS2"] as readonly Exclude<keyof SlopeScene, "kind" | "body">[],
  stack: ["count", "massKg", "radiusM", "gravityMPerS2", "perturbationFraction"] as Fields<StackScene>,
} satisfies Record<SceneKind, readonly string[]>;
const SNAPSHOT_BODY_FIELDS = ["xM", "yM", "vxMPerS", "vyMPerS", "massKg", "radiusM"] as const satisfies readonly (keyof SnapshotBody)[];
const SNAPSHOT_WALL_FIELDS = ["normalX", "normalY", "offsetM"] as const satisfies readonly (keyof SnapshotWall)[];
type Exhaustive<T, F extends readonly unknown[]> = [Exclude<Exclude<keyof T, "kind">, F[number]>] extends [never] ? true : false;
// Initial spins are keyed with the friction settings (below), only when given, so keys of scenes without them stay as they were.
const allSceneFields: [
  Exhaustive<Omit<PairScene, "spinARadPerS" | "spinBRadPerS">, typeof SCENE_FIELDS.pair>,
  Exhaustive<Omit<WallScene, "spinRadPerS">, typeof SCENE_FIELDS.wall>,
  Exhaustive<RowScene, typeof SCENE_FIELDS.row>,
  Exhaustive<BoxScene, typeof SCENE_FIELDS.box>,
  Exhaustive<Omit<SnapshotScene, "bodies" | "walls">, typeof SCENE_FIELDS.snapshot>,
  Exhaustive<Omit<SnapshotBody, "omegaRadPerS"> & { kind: never }, typeof SNAPSHOT_BODY_FIELDS>,
  Exhaustive<SnapshotWall & { kind: never }, typeof SNAPSHOT_WALL_FIELDS>,
  Exhaustive<Omit<SlopeScene, "body">, typeof SCENE_FIELDS.slope>,
  Exhaustive<StackScene, typeof SCENE_FIELDS.stack>,
] = [true, true, true, true, true, true, true, true, true];
void allSceneFields;
// Scenario and contact fields written below; a new one fails this check until it is keyed.
type KeyedScenarioFields = "scene" | "contact" | "integrator" | "dtS" | "substeps" | "durationS" | "tolerances" | "seed" | "verdictRules";
const allScenarioFields: [Exclude<keyof Scenario, KeyedScenarioFields>] extends [never] ? true : false = true;
void allScenarioFields;

/** Grows for snapshot scenes (every body and wall is keyed); other scenes fit in the first 256 words. */
let buffer = new Uint32Array(256);
const float64 = new Float64Array(1);
const float64Words = new Uint32Array(float64.buffer);
/** The words of the strings met so far (scene kinds, models, damping kinds, integrators: a handful). */
const stringWords = new Map<string, Uint32Array>();

function putNumber(w: Uint32Array, n: number, value: number): number {
  float64[0] = value === 0 ? 0 : value;
  w[n] = float64Words[0];
  w[n + 1] = float64Words[1];
  return n + 2;
}

function putOptional(w: Uint32Array, n: number, value: number | undefined): number {
  if (value === undefined) {
    w[n] = 0x554e4445;
    return n + 1;
  }
  w[n] = 0x56414c55;
  return putNumber(w, n + 1, value);
}

function encodeString(text: string): Uint32Array {
  const encoded = new Uint32Array(1 + Math.ceil(text.length / 2));
  let n = 0;
  encoded[n++] = 0x53000000 | text.length;
  let i = 0;
  for (; i + 1 < text.length; i += 2) encoded[n++] = text.charCodeAt(i) | (text.charCodeAt(i + 1) << 16);
  if (i < text.length) encoded[n++] = text.charCodeAt(i);
  return encoded;
}

function putString(w: Uint32Array, n: number, text: string): number {
  let encoded = stringWords.get(text);
  if (!encoded) {
    encoded = encodeString(text);
    // Bounded: an unexpected stream of distinct strings is encoded each time instead of kept.
    if (stringWords.size < 256) stringWords.set(text, encoded);
  }
  for (let i = 0; i < encoded.length; i++) w[n + i] = encoded[i];
  return n + encoded.length;
}

/** Whether a scenario sets friction, rolling resistance or an initial spin (their key words are written only then). */
function hasRotationSettings(scenario: Scenario): boolean {
  const contact = scenario.contact;
  if (contact.friction !== undefined || contact.rollingResistance !== undefined) return true;
  const scene = scenario.scene;
  // Scene kinds that came with friction always write the block (they have no older keys to keep).
  if (scene.kind === "slope" || scene.kind === "stack") return true;
  if (scene.kind === "pair") return scene.spinARadPerS !== undefined || scene.spinBRadPerS !== undefined;
  if (scene.kind === "wall") return scene.spinRadPerS !== undefined;
  if (scene.kind === "snapshot") return scene.bodies.some((body) => body.omegaRadPerS !== undefined);
  return false;
}

/** Write the key of `scenario` as four u32 words into `out` at `offset`. */
export function scenarioKey(scenario: Scenario, out: Uint32Array, offset = 0): void {
  const scene = scenario.scene as unknown as Record<string, number> & { kind: SceneKind };
  if (scene.kind === "snapshot") {
    const snapshot = scenario.scene as SnapshotScene;
    const need = 256 + 2 * (snapshot.bodies.length * (SNAPSHOT_BODY_FIELDS.length + 2) + snapshot.walls.length * SNAPSHOT_WALL_FIELDS.length);
    if (buffer.length < need) buffer = new Uint32Array(need * 2);
  }
  const w = buffer;
  let n = putString(w, 0, scene.kind);
  const fields = SCENE_FIELDS[scene.kind] as readonly string[];
  for (let i = 0; i < fields.length; i++) n = putNumber(w, n, scene[fields[i]]);
  if (scene.kind === "snapshot") {
    const snapshot = scenario.scene as SnapshotScene;
    w[n++] = snapshot.bodies.length;
    for (const body of snapshot.bodies) for (const field of SNAPSHOT_BODY_FIELDS) n = putNumber(w, n, body[field]);
    w[n++] = snapshot.walls.length;
    for (const wall of snapshot.walls) for (const field of SNAPSHOT_WALL_FIELDS) n = putNumber(w, n, wall[field]);
  }
  const contact = scenario.contact;
  n = putString(w, n, contact.model);
  n = putOptional(w, n, contact.stiffness);
  n = putOptional(w, n, contact.material?.youngsModulusPa);
  n = putOptional(w, n, contact.material?.poissonRatio);
  // The wall's material (Hertz): written only when the spec names it, so earlier keys stay as they were.
  if (contact.wall !== undefined) {
    w[n++] = 0x57414c4c;
    n = putString(w, n, contact.wall);
  }
  n = putString(w, n, contact.damping.kind);
  n = putOptional(w, n, contact.damping.kind === "none" ? undefined : contact.damping.value);
  n = putString(w, n, scenario.integrator);
  n = putNumber(w, n, scenario.dtS);
  n = putNumber(w, n, scenario.substeps);
  n = putNumber(w, n, scenario.durationS);
  n = putNumber(w, n, scenario.tolerances.energyDriftRel);
  n = putNumber(w, n, scenario.tolerances.maxOverlapFraction);
  n = putNumber(w, n, scenario.tolerances.blowUpEnergyFactor);
  n = putNumber(w, n, scenario.seed);
  // Verdict rules: a scenario judged by rules 1 (no `verdictRules`, as every cell stored before the
  // rules were versioned) writes nothing more, so its key is the one it always had; later rules
  // write a marker, their version and the tolerances they added, so a cell judged by one version
  // never serves a sweep judged by another.
  // Rules 3 differ from rules 2 only in where a Hertz contact ends (CONTACT_END_GAUGE_SINCE_RULES):
  // a linear cell computes byte-identically under both, so it keys as rules 2 and stored cells keep serving.
  const rules = scenario.verdictRules ?? 1;
  if (rules >= 2) {
    const tolerances = scenario.tolerances;
    w[n++] = 0x56524c53;
    w[n++] = rules === 3 && scenario.contact.model === "linear" ? 2 : rules;
    n = putOptional(w, n, tolerances.amplificationLimit);
    n = putOptional(w, n, tolerances.restitutionRel);
    n = putOptional(w, n, tolerances.energyPeakRel);
    n = putOptional(w, n, tolerances.minStepsPerContact);
  }
  // Friction, rolling resistance and initial spins: written (after a marker) only when any is
  // given, so every scenario without them keeps the key it had before they existed.
  if (hasRotationSettings(scenario)) {
    const friction = contact.friction;
    w[n++] = 0x46524943;
    n = putOptional(w, n, friction?.coefficient);
    n = putOptional(w, n, friction?.staticCoefficient);
    n = putOptional(w, n, friction?.stiffnessRatio);
    n = putOptional(w, n, friction?.stiffness);
    n = putOptional(w, n, friction?.dampingRatio);
    n = putOptional(w, n, contact.rollingResistance);
    const spinScene = scenario.scene;
    if (spinScene.kind === "pair") {
      n = putOptional(w, n, spinScene.spinARadPerS);
      n = putOptional(w, n, spinScene.spinBRadPerS);
    } else if (spinScene.kind === "wall") {
      n = putOptional(w, n, spinScene.spinRadPerS);
    } else if (spinScene.kind === "snapshot") {
      for (const body of spinScene.bodies) n = putOptional(w, n, body.omegaRadPerS);
    } else if (spinScene.kind === "slope") {
      n = putString(w, n, spinScene.body);
    }
    const tolerances = scenario.tolerances;
    n = putOptional(w, n, tolerances.restSpeedMPerS);
    n = putOptional(w, n, tolerances.creepFraction);
    n = putOptional(w, n, tolerances.restingOverlapFraction);
  }

  let h0 = 0x9747b28c | 0;
  let h1 = 0x2f8b6a11 | 0;
  let h2 = 0x61c88647 | 0;
  let h3 = 0x7f4a7c15 | 0;
  for (let i = 0; i < n; i++) {
    let k = Math.imul(w[i], 0xcc9e2d51);
    k = (k << 15) | (k >>> 17);
    k = Math.imul(k, 0x1b873593);
    h0 ^= k;
    h0 = (h0 << 13) | (h0 >>> 19);
    h0 = (Math.imul(h0, 5) + 0xe6546b64) | 0;
    h1 ^= k;
    h1 = (h1 << 17) | (h1 >>> 15);
    h1 = (Math.imul(h1, 5) + 0x0bcaa747) | 0;
    h2 ^= k;
    h2 = (h2 << 19) | (h2 >>> 13);
    h2 = (Math.imul(h2, 5) + 0x96cd1c35) | 0;
    h3 ^= k;
    h3 = (h3 << 11) | (h3 >>> 21);
    h3 = (Math.imul(h3, 5) + 0x32ac3b17) | 0;
  }
  h0 ^= n;
  const a = fmix32(h0 ^ h2);
  const b = fmix32(h1 ^ h3);
  out[offset] = fmix32((h0 + b) | 0);
  out[offset + 1] = fmix32((h1 + a) | 0);
  out[offset + 2] = fmix32(((h2 ^ b) + a) | 0);
  out[offset + 3] = fmix32(((h3 ^ a) + b) | 0);
}

/**
 * An open-addressing table from 128-bit keys to non-negative integers (first insert wins), for
 * matching a sweep's cells against a studio's stored results without building strings.
 */
export class KeyTable {
  private readonly mask: number;
  private readonly keys: Uint32Array;
  private readonly values: Int32Array;
  size = 0;

  constructor(expected: number) {
    let capacity = 16;
    while (capacity < expected * 2) capacity *= 2;
    this.mask = capacity - 1;
    this.keys = new Uint32Array(capacity * 4);
    this.values = new Int32Array(capacity).fill(-1);
  }

  private slot(source: Uint32Array, at: number): number {
    let slot = source[at] & this.mask;
    for (;;) {
      if (this.values[slot] === -1) return slot;
      const k = slot * 4;
      if (this.keys[k] === source[at] && this.keys[k + 1] === source[at + 1] && this.keys[k + 2] === source[at + 2] && this.keys[k + 3] === source[at + 3]) return slot;
      slot = (slot + 1) & this.mask;
    }
  }

  /** Store `value` under the key at source[at … at + 3] unless the key is present; returns the stored value. */
  insert(source: Uint32Array, at: number, value: number): number {
    const slot = this.slot(source, at);
    if (this.values[slot] !== -1) return this.values[slot];
    if ((this.size + 1) * 2 > this.mask + 1) throw new Error("KeyTable is full: size it for the keys it will hold");
    this.keys.set(source.subarray(at, at + 4), slot * 4);
    this.values[slot] = value;
    this.size++;
    return value;
  }

  /** The value under the key at source[at … at + 3], or −1. */
  get(source: Uint32Array, at: number): number {
    return this.values[this.slot(source, at)];
  }
}
