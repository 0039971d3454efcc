/**
 * "Re-run at a finer dt": one cell of a sweep again as a one-cell sweep, its frame step scaled by a
 * factor below 1. The quote route and the submit route build the same spec here, so what is quoted
 * is exactly what runs.
 */
import "server-only";
import type { Sweep } from "@/db/schema";
import { cellAt, expandAxes } from "@/lib/sweeps/grid";
import type { SweepSpec } from "@/lib/sweeps/spec";

export interface RerunPlan {
  spec: { name: string; scenario: SweepSpec["scenario"]; axes: [] };
  name: string;
  rerunOf: { sweepId: string; cellIndex: number };
}

export function rerunPlan(sweep: Sweep, index: number, dtFactor: number): RerunPlan {
  const spec = sweep.spec;
  const cell = cellAt(spec, expandAxes(spec), index);
  // The original spec seed with the cell's own scene derives the same cell seed again.
  const scenario = { ...cell.scenario, seed: spec.scenario.seed, dtS: cell.scenario.dtS * dtFactor };
  const name = `${sweep.name} · cell ${index} at dt × ${dtFactor}`.slice(0, 120);
  return { spec: { name, scenario, axes: [] }, name, rerunOf: { sweepId: sweep.id, cellIndex: index } };
}
