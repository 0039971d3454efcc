/**
 * SHA-256 identities for the result cache and for stored sweeps. Uses
 * node:crypto, so server, worker and CLI only; the canonical form it hashes is
 * the pure `canonicalJson`.
 */
import "server-only";
import { createHash } from "node:crypto";
import type { Scenario } from "../physics/types";
import { canonicalJson } from "./canonical";
import type { SweepSpec } from "./spec";

export function sha256Hex(text: string): string {
  return createHash("sha256").update(text, "utf8").digest("hex");
}

/** Digests of snapshot discs by array identity: every cell of a sweep shares its spec's array. */
const snapshotBodiesDigests = new WeakMap<object, string>();

/**
 * Identity of one cell's simulation: equal scenarios (after canonical ordering) give equal hashes.
 * A snapshot scene's discs enter as the SHA-256 of their canonical JSON, computed once per array,
 * so hashing each cell of a many-disc snapshot does not re-serialise thousands of discs.
 */
export function scenarioHash(scenario: Scenario): string {
  const scene = scenario.scene;
  if (scene.kind !== "snapshot") return sha256Hex(canonicalJson(scenario));
  let digest = snapshotBodiesDigests.get(scene.bodies);
  if (digest === undefined) {
    digest = sha256Hex(canonicalJson(scene.bodies));
    snapshotBodiesDigests.set(scene.bodies, digest);
  }
  return sha256Hex(canonicalJson({ ...scenario, scene: { ...scene, bodies: `sha256:${digest}` } }));
}

/** Identity of a parsed sweep spec (defaults filled in, so equivalent inputs agree). */
export function specHash(spec: SweepSpec): string {
  return sha256Hex(canonicalJson(spec));
}
