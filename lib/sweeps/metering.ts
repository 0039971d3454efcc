/**
 * Metering: how a sweep's work becomes billed compute milliseconds, and the quote's ceiling and
 * expected figures. Pure (no I/O, no clocks): the same spec always gives the same figures.
 *
 * - The engine counts each cell's work units (lib/physics/work-units.ts).
 * - A fixed published rate, WORK_UNITS_PER_BILLED_MS, turns units into billed milliseconds. A
 *   sweep is billed ⌈its cells' units / rate⌉ ms in all: each chunk, as it lands, is debited the
 *   rise of the running total (⌊total so far / rate⌋, the last chunk ⌈…⌉), so the sum over the
 *   chunks is the same whatever their size, order, thread or host.
 * - The ceiling bounds every cell's units from the spec alone (workUnitCeiling); a sweep is never
 *   billed more than ⌈Σ cell ceilings / rate⌉ ms, and the ledger debit is clamped to it as well.
 * - The expected figure runs a deterministic sample of the cells through the engine and scales
 *   their measured units to the rest by each cell's ceiling (ratio estimate).
 */
import { createRunScratch, simulate, totalSubsteps } from "../physics/simulate";
import { MAX_BODIES_FOR_FREE_FLIGHT_JUMPS } from "../physics/constants";
import { wallCount, workUnitCeiling, type WorkShape } from "../physics/work-units";
import { METERING_WORK_UNITS, WORK_UNITS_PER_BILLED_MS, type Metering } from "./metering-rate";
import type { Scenario } from "../physics/types";
import { bodyCount } from "./axes";
import type { ChunkPlan } from "./chunks";
import { expandAxes, forEachCellInRange, type ExpandedAxis } from "./grid";
import type { SweepSpec } from "./spec";

export { WORK_UNITS_PER_BILLED_MS, type Metering } from "./metering-rate";

/** Billed ms of a number of work units, rounded up (a sweep that did any work costs at least 1 ms). */
export function billedMsOfUnits(units: number): number {
  return Math.ceil(units / WORK_UNITS_PER_BILLED_MS);
}

/**
 * The debit of a chunk landing with `chunkUnits`, after chunks worth `unitsBefore` units were
 * metered `meteredBefore` ms; `last` when it completes the sweep. Capped so the sweep's total never
 * passes `ceilingMs`. (kickdrift_record_chunk computes the same in SQL; tests compare the two.)
 */
export function chunkDebitMs(unitsBefore: number, chunkUnits: number, meteredBefore: number, last: boolean, ceilingMs: number): number {
  const total = unitsBefore + chunkUnits;
  const target = Math.min(last ? Math.ceil(total / WORK_UNITS_PER_BILLED_MS) : Math.floor(total / WORK_UNITS_PER_BILLED_MS), ceilingMs);
  return Math.max(0, target - meteredBefore);
}

/** The shape that bounds a cell's work units (as the engine will run it: default broad phase and stepping). */
export function workShapeOf(scenario: Scenario): WorkShape {
  const bodies = bodyCount(scenario);
  const scene = scenario.scene;
  const gravity = scene.kind === "box" || scene.kind === "snapshot" ? scene.gravityMPerS2 : 0;
  return {
    steps: totalSubsteps(scenario),
    bodies,
    walls: wallCount(scenario),
    grid: scene.kind === "box" || bodies > MAX_BODIES_FOR_FREE_FLIGHT_JUMPS,
    hertz: scenario.contact.model === "hertz",
    jumps: gravity === 0 && bodies <= MAX_BODIES_FOR_FREE_FLIGHT_JUMPS,
  };
}

export function cellCeilingUnits(scenario: Scenario): number {
  return workUnitCeiling(workShapeOf(scenario));
}

/** Cells the expected figure runs at most, and the most work (in ceiling units) it may spend on them. */
export const EXPECTED_SAMPLE_CELLS = 64;
export const EXPECTED_SAMPLE_BUDGET_UNITS = 150 * WORK_UNITS_PER_BILLED_MS;

export interface ChunkMeter {
  /** Ceiling units of the chunk's cells still to run. */
  ceilingUnits: number;
  /** The chunk's share of the sweep's ceiling in ms (shares add up to ceilingMs exactly). */
  ceilingMs: number;
  /** Expected units of the chunk's cells to run. */
  expectedUnits: number;
}

export interface SweepMeter {
  metering: Metering;
  ceilingUnits: number;
  /** The most the sweep can be billed (ms). */
  ceilingMs: number;
  expectedUnits: number;
  /** The expected bill (ms), never above ceilingMs. */
  expectedMs: number;
  /** Cells the expected figure ran; equal to the cells to run when the sample covered them all (then expectedMs is the bill). */
  sampledCells: number;
  chunks: ChunkMeter[];
}

/** Work units of one cell, run through the engine. */
function cellUnits(spec: SweepSpec, axes: readonly ExpandedAxis[], index: number, scratch: ReturnType<typeof createRunScratch>): number {
  let units = -1;
  forEachCellInRange(spec, axes, index, 1, (cell) => {
    units = simulate(cell.scenario, {}, scratch).workUnits;
  });
  if (units < 0) throw new RangeError(`cell ${index} is outside the grid`);
  return units;
}

/**
 * Ceiling and expected figures of a sweep's cells still to run (`cached(index)` true for a cell the
 * result cache serves: it costs nothing), per chunk of `plan`.
 */
export function meterSweep(
  spec: SweepSpec,
  plan: readonly ChunkPlan[],
  cached: (index: number) => boolean = () => false,
  axes: readonly ExpandedAxis[] = expandAxes(spec),
  /**
   * Work units of cells of this spec already run for a sample, by cell index (a cell's units depend
   * on its scenario alone): used instead of running them again, and filled with those run here.
   */
  known?: Map<number, number>,
): SweepMeter {
  const cells = plan.reduce((n, chunk) => n + chunk.cellCount, 0);
  const ceilingOf = new Float64Array(cells);
  let ceilingUnits = 0;
  forEachCellInRange(spec, axes, 0, cells, (cell) => {
    if (cached(cell.index)) return;
    const units = cellCeilingUnits(cell.scenario);
    ceilingOf[cell.index] = units;
    ceilingUnits += units;
  });

  // The sample: cells to run, evenly spread over the grid, within the budget (cheapest-first is not
  // used: the sample must represent the whole grid, so a cell over the remaining budget is skipped).
  const runIndices: number[] = [];
  for (let i = 0; i < cells; i++) if (ceilingOf[i] > 0) runIndices.push(i);
  const wanted = Math.min(EXPECTED_SAMPLE_CELLS, runIndices.length);
  const sampleSet = new Set<number>();
  if (ceilingUnits <= EXPECTED_SAMPLE_BUDGET_UNITS) for (const i of runIndices) sampleSet.add(i);
  else {
    let budget = EXPECTED_SAMPLE_BUDGET_UNITS;
    for (let k = 0; k < wanted; k++) {
      const i = runIndices[Math.floor(((k + 0.5) * runIndices.length) / wanted)];
      if (ceilingOf[i] > budget) continue;
      budget -= ceilingOf[i];
      sampleSet.add(i);
    }
  }
  const measured = new Map<number, number>();
  let sampleUnits = 0;
  let sampleCeiling = 0;
  if (sampleSet.size > 0) {
    const sorted = [...sampleSet].sort((a, b) => a - b);
    let scratch: ReturnType<typeof createRunScratch> | undefined;
    for (const index of sorted) {
      let units = known?.get(index);
      if (units === undefined) {
        scratch ??= createRunScratch();
        units = cellUnits(spec, axes, index, scratch);
        known?.set(index, units);
      }
      measured.set(index, units);
      sampleUnits += units;
      sampleCeiling += ceilingOf[index];
    }
  }
  // Without a sample (every cell too costly to try), expect half the ceiling.
  const ratio = sampleCeiling > 0 ? sampleUnits / sampleCeiling : 0.5;

  const chunks: ChunkMeter[] = [];
  let cumulativeCeiling = 0;
  let expectedUnits = 0;
  for (const chunk of plan) {
    let chunkCeiling = 0;
    let chunkExpected = 0;
    for (let i = chunk.firstCell; i < chunk.firstCell + chunk.cellCount; i++) {
      if (ceilingOf[i] === 0) continue;
      chunkCeiling += ceilingOf[i];
      chunkExpected += measured.get(i) ?? ceilingOf[i] * ratio;
    }
    const before = billedMsOfUnits(cumulativeCeiling);
    cumulativeCeiling += chunkCeiling;
    chunks.push({ ceilingUnits: chunkCeiling, ceilingMs: billedMsOfUnits(cumulativeCeiling) - before, expectedUnits: chunkExpected });
    expectedUnits += chunkExpected;
  }
  const ceilingMs = billedMsOfUnits(ceilingUnits);
  return {
    metering: METERING_WORK_UNITS,
    ceilingUnits,
    ceilingMs,
    expectedUnits: Math.round(expectedUnits),
    expectedMs: Math.min(ceilingMs, billedMsOfUnits(Math.round(expectedUnits))),
    sampledCells: sampleSet.size,
    chunks,
  };
}
