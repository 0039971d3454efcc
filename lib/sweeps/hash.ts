/**
 * SHA-256 identities for the result cache and for stored sweeps. Uses
 * node:crypto, so server, worker and CLI only; the canonical form it hashes is
 * the pure `canonicalJson`.
 */
import { createHash } from "node:crypto";
import type { Scenario } from "../physics/types";
import { canonicalJson } from "./canonical";
import type { SweepSpec } from "./spec";

export function sha256Hex(text: string): string {
  return createHash("sha256").update(text, "utf8").digest("hex");
}

/** Identity of one cell's simulation: equal scenarios (after canonical ordering) give equal hashes. */
export function scenarioHash(scenario: Scenario): string {
  return sha256Hex(canonicalJson(scenario));
}

/** Identity of a parsed sweep spec (defaults filled in, so equivalent inputs agree). */
export function specHash(spec: SweepSpec): string {
  return sha256Hex(canonicalJson(spec));
}
