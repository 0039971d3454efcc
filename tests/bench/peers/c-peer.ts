/**
 * Builds and runs the plain C reference peer (contact-peer.c) with the system's `cc -O2`.
 * `-ffp-contract=off` keeps the compiler from fusing a·b + c into one rounding, so the peer
 * performs the engine's very operations and the two agree to the last bit.
 */
import { spawnSync } from "node:child_process";
import { createHash } from "node:crypto";
import { existsSync, mkdtempSync, readFileSync, renameSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { buildScene } from "../../../lib/physics/scenes";
import { linearDampingRatioForRestitution } from "../../../lib/physics/damping";
import type { Scenario } from "../../../lib/physics/types";

const SOURCE = path.join(path.dirname(fileURLToPath(import.meta.url)), "contact-peer.c");
export const PEER_CFLAGS = ["-O2", "-ffp-contract=off"];

export type PeerBuild = { ok: true; binary: string } | { ok: false; why: string };

let built: PeerBuild | undefined;

/** Compiles the peer once per process (cached by source hash in the temp directory). */
export function buildPeer(): PeerBuild {
  if (built) return built;
  const probe = spawnSync("cc", ["--version"], { encoding: "utf8" });
  if (probe.error || probe.status !== 0) {
    built = { ok: false, why: "no C compiler (cc) on this machine" };
    return built;
  }
  const source = readFileSync(SOURCE);
  const hash = createHash("sha256").update(source).update(PEER_CFLAGS.join(" ")).digest("hex").slice(0, 16);
  const binary = path.join(tmpdir(), `kickdrift-contact-peer-${hash}`);
  if (!existsSync(binary)) {
    // Built under a private name and renamed into place, so concurrent test files never run a half-written binary.
    const partial = `${binary}.${process.pid}.${Date.now()}`;
    const compile = spawnSync("cc", [...PEER_CFLAGS, "-o", partial, SOURCE, "-lm"], { encoding: "utf8" });
    if (compile.status !== 0) {
      built = { ok: false, why: `cc failed: ${compile.stderr.trim()}` };
      return built;
    }
    renameSync(partial, binary);
  }
  built = { ok: true, binary };
  return built;
}

export function ccVersion(): string {
  const probe = spawnSync("cc", ["--version"], { encoding: "utf8" });
  return probe.status === 0 ? probe.stdout.split("\n")[0] : "none";
}

export interface PeerRun {
  /** Compute time of each repeat (ns, elapsed), I/O excluded. */
  ns: number[];
  /** CPU time of each repeat (ns). */
  cpuNs: number[];
  /** Final state: per body x, y, vx, vy (pair mode: per cell, two bodies). */
  state: Float64Array;
}

function runPeer(binary: string, input: Float64Array, repeats: number): PeerRun {
  const directory = mkdtempSync(path.join(tmpdir(), "kickdrift-peer-"));
  const inputPath = path.join(directory, "in.f64");
  const outputPath = path.join(directory, "out.f64");
  writeFileSync(inputPath, new Uint8Array(input.buffer, input.byteOffset, input.byteLength));
  const run = spawnSync(binary, [inputPath, outputPath, String(repeats)], { encoding: "utf8", maxBuffer: 1 << 20 });
  if (run.status !== 0) throw new Error(`C peer failed: ${run.stderr}`);
  const lines = run.stdout.split("\n");
  const ns = lines.filter((line) => line.startsWith("ns ")).map((line) => Number(line.slice(3)));
  const cpuNs = lines.filter((line) => line.startsWith("cpu ")).map((line) => Number(line.slice(4)));
  const bytes = readFileSync(outputPath);
  const state = new Float64Array(bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength));
  rmSync(directory, { recursive: true, force: true });
  return { ns, cpuNs, state };
}

/** Linear damping c of a scenario's contact for the reduced mass given (the engine's arithmetic). */
function linearDamping(scenario: Scenario, reducedMass: number): number {
  const damping = scenario.contact.damping;
  if (damping.kind === "coefficient") return damping.value;
  if (damping.kind !== "restitution" || damping.value >= 1) return 0;
  return 2 * linearDampingRatioForRestitution(damping.value) * Math.sqrt(reducedMass * (scenario.contact.stiffness ?? 0));
}

function linearRatio(scenario: Scenario): number {
  const damping = scenario.contact.damping;
  if (damping.kind !== "restitution" || damping.value >= 1) throw new Error("the box peer takes a target restitution < 1");
  return linearDampingRatioForRestitution(damping.value);
}

/** Pair-grid cells (two discs, linear law, symplectic Euler), each stepped `steps[c]` times. */
export function runPairPeer(binary: string, scenarios: Scenario[], steps: number[], repeats: number): PeerRun {
  const input = new Float64Array(2 + scenarios.length * 18);
  input[0] = 1;
  input[1] = scenarios.length;
  scenarios.forEach((scenario, c) => {
    if (scenario.contact.model !== "linear" || scenario.integrator !== "symplectic-euler" || scenario.substeps !== 1) throw new Error("the pair peer runs linear contacts with symplectic Euler, one substep");
    const { bodies } = buildScene(scenario.scene, scenario.seed);
    const base = 2 + c * 18;
    input[base] = scenario.dtS;
    input[base + 1] = steps[c];
    input[base + 2] = scenario.contact.stiffness ?? 0;
    input[base + 3] = linearDamping(scenario, 1 / (bodies.inverseMass[0] + bodies.inverseMass[1]));
    for (let b = 0; b < 2; b++) {
      const slot = base + 4 + 7 * b;
      input.set([bodies.x[b], bodies.y[b], bodies.vx[b], bodies.vy[b], bodies.mass[b], bodies.inverseMass[b], bodies.radius[b]], slot);
    }
  });
  return runPeer(binary, input, repeats);
}

/** A box or snapshot scenario (linear law with a target restitution, symplectic Euler), `steps` steps. */
export function runBoxPeer(binary: string, scenario: Scenario, steps: number, repeats: number): PeerRun {
  if (scenario.contact.model !== "linear" || scenario.integrator !== "symplectic-euler") throw new Error("the box peer runs linear contacts with symplectic Euler");
  const { bodies, walls, gravityMPerS2 } = buildScene(scenario.scene, scenario.seed);
  const n = bodies.count;
  const input = new Float64Array(8 + 3 * walls.length + 7 * n);
  input.set([2, n, walls.length, gravityMPerS2, scenario.contact.stiffness ?? 0, linearRatio(scenario), scenario.dtS / scenario.substeps, steps]);
  walls.forEach((wall, w) => input.set([wall.normalX, wall.normalY, wall.offsetM], 8 + 3 * w));
  const base = 8 + 3 * walls.length;
  for (let i = 0; i < n; i++) input.set([bodies.x[i], bodies.y[i], bodies.vx[i], bodies.vy[i], bodies.mass[i], bodies.inverseMass[i], bodies.radius[i]], base + 7 * i);
  return runPeer(binary, input, repeats);
}
