/**
 * Metering bench: for each example spec and template, the quote's ceiling and expected figures,
 * the bill (work units at the published rate), the worker wall time on this machine, and their
 * ratios. Also the calibration of WORK_UNITS_PER_BILLED_MS: best-of-three thread time per cell
 * against its work units, by scene kind ("ns per unit" ≈ 1 means a billed minute ≈ a thread minute
 * of this machine when it is quiet). Prints; asserts nothing.
 */
import { readFileSync, readdirSync } from "node:fs";
import path from "node:path";
import { simulate } from "../../lib/physics/index";
import { predictSweep } from "../../lib/sweeps/chunks";
import { expandAxes, forEachCellInRange } from "../../lib/sweeps/grid";
import { meterSweep, WORK_UNITS_PER_BILLED_MS } from "../../lib/sweeps/metering";
import { createChunkPool } from "../../lib/sweeps/pool";
import { runSweep } from "../../lib/sweeps/run";
import { parseSweepSpec, type SweepSpec } from "../../lib/sweeps/spec";
import { SWEEP_TEMPLATES } from "../../lib/sweeps/templates";
import { bestOfNs, formatSi, table, type BenchModule } from "./bench-module";

export function benchSpecs(): { name: string; spec: SweepSpec }[] {
  const out: { name: string; spec: SweepSpec }[] = [];
  const dir = path.join(process.cwd(), "examples");
  for (const file of readdirSync(dir).filter((f) => f.endsWith(".json")).sort()) {
    const parsed = parseSweepSpec(JSON.parse(readFileSync(path.join(dir, file), "utf8")));
    if (parsed.ok) out.push({ name: `example ${file.replace(/\.json$/, "")}`, spec: parsed.spec });
  }
  for (const template of SWEEP_TEMPLATES) {
    const parsed = parseSweepSpec(template.spec);
    if (parsed.ok) out.push({ name: `template ${template.id}`, spec: parsed.spec });
  }
  return out;
}

/** Thread time per work unit on up to `cells` cells of the spec (best of three per cell). */
function nsPerUnit(spec: SweepSpec, cells: number): { ns: number; units: number } {
  const axes = expandAxes(spec);
  const total = axes.reduce((n, axis) => n * axis.values.length, 1);
  let ns = 0;
  let units = 0;
  const step = Math.max(1, Math.floor(total / cells));
  for (let index = 0; index < total; index += step) {
    forEachCellInRange(spec, axes, index, 1, (cell) => {
      units += simulate(cell.scenario).workUnits;
      ns += bestOfNs(3, () => simulate(cell.scenario));
    });
  }
  return { ns, units };
}

export const metering: BenchModule = {
  id: "metering",
  title: "Quote ceiling and expected vs bill vs wall time, per example spec and template",
  async run() {
    const specs = benchSpecs();
    console.log(`rate: ${WORK_UNITS_PER_BILLED_MS.toLocaleString("en")} work units per billed ms`);
    console.log("\ncalibration (in-process, best of 3 per cell, ≤ 48 cells per spec):");
    const calibration: (string | number)[][] = [["spec", "ns / unit"]];
    for (const { name, spec } of specs) {
      const { ns, units } = nsPerUnit(spec, 48);
      calibration.push([name, (ns / units).toFixed(2)]);
    }
    console.log(table(calibration));

    const pool = createChunkPool({ threads: 1, entry: "source" });
    try {
      const rows: (string | number)[][] = [["spec", "cells", "ceiling ms", "expected ms", "billed ms", "wall ms", "billed/ceiling", "billed/expected", "wall/billed"]];
      for (const { name, spec } of specs) {
        const estimate = predictSweep(spec);
        const meter = meterSweep(spec, estimate.plan);
        const summary = await runSweep(spec, { pool, plan: estimate.plan });
        rows.push([
          name,
          estimate.cells,
          meter.ceilingMs,
          meter.expectedMs,
          summary.billedMs,
          summary.wallMs,
          formatSi(summary.billedMs / meter.ceilingMs),
          formatSi(summary.billedMs / meter.expectedMs),
          formatSi(summary.wallMs / summary.billedMs),
        ]);
      }
      console.log("\none warm worker thread (wall = the chunks' thread time on this machine, as loaded as it is now):");
      console.log(table(rows));
    } finally {
      await pool.close();
    }
  },
};
