/**
 * The real piscina pool, loading workers/chunk-worker.ts under tsx and the
 * esbuild bundle: results are byte-identical for any thread count and chunk size.
 */
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { build } from "esbuild";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { simulate } from "../../../lib/physics/index";
import { expandSweep } from "../../../lib/sweeps/grid";
import { closeChunkPool, createChunkPool, getChunkPool, type ChunkPool } from "../../../lib/sweeps/pool";
import { PackedView } from "../../../lib/sweeps/packed";
import { pickMetrics, resultsToJson, type CellResult } from "../../../lib/sweeps/results";
import { runSweep } from "../../../lib/sweeps/run";
import { type SweepSpec } from "../../../lib/sweeps/spec";
import { ballPitBoxSpec, bumperWallSpec, clone, puckPairSpec, type Draft, parsedSpec } from "./fixtures";

async function sweepJson(spec: SweepSpec, pool: ChunkPool, maxCellsPerChunk: number): Promise<{ json: string; chunks: number; computeMs: number[] }> {
  const collected: CellResult[] = [];
  const summary = await runSweep(spec, { pool, maxCellsPerChunk, targetChunkMs: 10_000, onResults: (results) => collected.push(...results) });
  return { json: resultsToJson(summary.header, collected), chunks: summary.chunks.length, computeMs: summary.chunkWallMs };
}

const pairSpec = (() => {
  const input = clone(puckPairSpec()) as Draft;
  input.axes.push({ parameter: "scene.offsetFraction", spacing: "linear", from: 0, to: 0.9, count: 4 });
  return parsedSpec(input); // 5 × 3 × 4 = 60 cells
})();
const boxSpec = parsedSpec(ballPitBoxSpec());
const wallSpec = parsedSpec(bumperWallSpec());
/** The ball pit with friction (issue #15): per-contact tangential history across threads and chunkings. */
const frictionBoxSpec = (() => {
  const input = clone(ballPitBoxSpec()) as Draft;
  (input.scenario.contact as Record<string, unknown>).friction = { coefficient: 0.5, stiffnessRatio: 2 / 7, dampingRatio: 0.2 };
  return parsedSpec(input);
})();

describe("chunk pool (piscina, TypeScript entry under tsx)", { timeout: 120_000 }, () => {
  let onePool: ChunkPool;
  let twoPool: ChunkPool;
  beforeAll(() => {
    onePool = createChunkPool({ threads: 1, entry: "source" });
    twoPool = createChunkPool({ threads: 2, entry: "source" });
  });
  afterAll(async () => {
    await Promise.all([onePool?.close(), twoPool?.close()]);
  });

  it("gives byte-identical JSON for 1 and 2 threads and two chunk sizes", async () => {
    for (const spec of [pairSpec, boxSpec, wallSpec, frictionBoxSpec]) {
      const runs = [
        await sweepJson(spec, onePool, 1_000),
        await sweepJson(spec, onePool, 2),
        await sweepJson(spec, twoPool, 1_000),
        await sweepJson(spec, twoPool, 1),
      ];
      expect(runs[1].chunks).toBeGreaterThan(runs[0].chunks); // the chunkings really differ
      for (const run of runs.slice(1)) expect(run.json).toBe(runs[0].json);
    }
  });

  it("returns what the engine returns for each cell, with measured compute in whole milliseconds", async () => {
    const collected: CellResult[] = [];
    const summary = await runSweep(pairSpec, { pool: twoPool, maxCellsPerChunk: 16, onResults: (results) => collected.push(...results) });
    const cells = expandSweep(pairSpec);
    expect(collected.map((result) => result.index)).toEqual(cells.map((cell) => cell.index));
    for (const cell of cells) {
      const run = simulate(cell.scenario);
      expect(collected[cell.index]).toEqual({ index: cell.index, axisValues: cell.axisValues, verdict: run.verdict, reason: run.reason, metrics: pickMetrics(run.metrics) });
    }
    expect(summary.chunkWallMs.every((ms) => Number.isInteger(ms) && ms >= 1)).toBe(true);
    expect(summary.wallMs).toBe(summary.chunkWallMs.reduce((sum, ms) => sum + ms, 0));
  });

  it("rejects a chunk whose cell fails, naming the cell", async () => {
    // A scenario that bypassed the schema: 50 discs that cannot be laid out in the box (the engine throws).
    const cell = expandSweep(boxSpec)[0];
    const badScenario = { ...cell.scenario, scene: { ...cell.scenario.scene, count: 5_000 } } as typeof cell.scenario;
    const outcome = twoPool.run({ kind: "cells", chunkIndex: 3, cells: [{ index: 41, axisValues: [], scenario: badScenario }] });
    await expect(outcome).rejects.toThrow(/cell 41 of chunk 3/);
  });

  it("fails a sweep on the first failing chunk and drops the chunks still waiting", async () => {
    // A spec that bypassed the schema: 5,000 discs cannot be laid out in the 1 m box, so every cell throws.
    const unrunnable = { ...boxSpec, scenario: { ...boxSpec.scenario, scene: { ...boxSpec.scenario.scene, count: 5_000 } }, axes: [{ parameter: "contact.stiffness", spacing: "log" as const, from: 1e3, to: 1e5, count: 40 }] };
    const seen: number[] = [];
    await expect(runSweep(unrunnable, { pool: onePool, maxCellsPerChunk: 1, onResults: (results) => seen.push(results.length) })).rejects.toThrow(/failed in the engine/);
    await onePool.idle();
    expect(seen).toEqual([]);
    expect(onePool.pending).toBe(0);
    expect(onePool.inFlight).toBe(0);
  });
});

describe("chunk pool (esbuild bundle, as under next start)", { timeout: 120_000 }, () => {
  let rootDir: string;
  let pool: ChunkPool | undefined;
  beforeAll(async () => {
    rootDir = mkdtempSync(path.join(tmpdir(), "kd-sweeps-bundle-"));
    // The same build as scripts/build-worker.mjs, into a private folder.
    await build({
      entryPoints: [path.join(process.cwd(), "workers", "chunk-worker.ts")],
      bundle: true,
      platform: "node",
      format: "esm",
      target: "node20",
      outfile: path.join(rootDir, ".build", "chunk-worker.mjs"),
      logLevel: "warning",
    });
  });
  afterAll(async () => {
    await pool?.close();
    rmSync(rootDir, { recursive: true, force: true });
  });

  it("loads the bundle and gives the same bytes as the TypeScript entry", async () => {
    pool = createChunkPool({ threads: 2, entry: "bundle", rootDir });
    const source = createChunkPool({ threads: 1, entry: "source" });
    try {
      const fromBundle = await sweepJson(pairSpec, pool, 9);
      const fromSource = await sweepJson(pairSpec, source, 1_000);
      expect(fromBundle.json).toBe(fromSource.json);
    } finally {
      await source.close();
    }
  });

  it("says how to make the bundle when it is missing", () => {
    expect(() => createChunkPool({ threads: 1, entry: "bundle", rootDir: path.join(rootDir, "nowhere") })).toThrow(/build-worker\.mjs/);
  });
});

describe("process-wide pool", { timeout: 120_000 }, () => {
  afterAll(() => closeChunkPool());

  it("is created once, kept on globalThis, and replaced after closing", async () => {
    const first = getChunkPool({ threads: 1, entry: "source" });
    expect(getChunkPool()).toBe(first);
    expect(first.threads).toBe(1);
    const outcome = await first.run({ kind: "range", chunkIndex: 0, spec: wallSpec, firstCell: 0, cellCount: 3 });
    expect([...new PackedView(outcome.packed).indices]).toEqual([0, 1, 2]);
    await closeChunkPool();
    const second = getChunkPool({ threads: 1, entry: "source" });
    expect(second).not.toBe(first);
  });
});
