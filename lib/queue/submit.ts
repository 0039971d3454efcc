/**
 * Quotes and submission of sweeps. Submission validates, predicts, counts cache hits, checks the
 * balance, then writes the sweep, its chunks and its cached cells in ONE transaction: on any
 * error nothing is queued.
 */
import { randomBytes } from "node:crypto";
import { and, eq, sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { resultCache, sweepCells, sweepChunks, sweeps, type Sweep } from "@/db/schema";
import { ApiError } from "@/lib/errors";
import { balanceMs } from "@/lib/ledger/ledger";
import { enforceSubmitLimits, quoteLimits, type QuoteLimits, type SweepDemand } from "@/lib/quotas/enforce";
import { bodyCount } from "@/lib/sweeps/axes";
import type { ChunkOptions, ChunkPlan } from "@/lib/sweeps/chunks";
import { QUOTE_BAND, predictSweep } from "@/lib/sweeps/cost";
import { expandAxes, forEachCellInRange } from "@/lib/sweeps/grid";
import { scenarioHash, specHash } from "@/lib/sweeps/hash";
import { parseSweepSpec, type SweepSpec } from "@/lib/sweeps/spec";

export interface Quote {
  cells: number;
  cachedCells: number;
  cellsToRun: number;
  steps: number;
  estimatedComputeMs: number;
  estimatedMinutes: number;
  band: { lowMs: number; highMs: number };
  balanceMs: number;
  balanceAfterMs: number;
  /** The studio's effective limits, what is used and what remains; `violations` lists what submit would refuse. */
  limits: QuoteLimits;
  warnings: string[];
}

/** Parses a spec from a request body; field paths are prefixed with "spec." as the body names them. */
export function parseSpecOrThrow(input: unknown, prefix = "spec"): SweepSpec {
  if (input === undefined) throw new ApiError(422, "invalid_spec", `${prefix}: a sweep spec is required.`, prefix, [{ field: prefix, message: "a sweep spec is required" }]);
  const parsed = parseSweepSpec(input);
  if (parsed.ok) return parsed.spec;
  const issues = parsed.issues.map((issue) => ({
    field: issue.field === "(spec)" ? prefix : `${prefix}.${issue.field}`,
    message: issue.message,
  }));
  throw new ApiError(422, "invalid_spec", `${issues[0].field}: ${issues[0].message}`, issues[0].field, issues);
}

interface CachedRow {
  scenarioHash: string;
  metrics: unknown;
  verdict: string;
  reason: string;
}

interface Plan {
  spec: SweepSpec;
  chunks: ChunkPlan[];
  /** Scenario hash per cell, in index order (null when the studio had nothing cached to compare with). */
  hashes: (string | null)[];
  steps: number;
  /** The largest step count and body count of any cell, for the per-sweep quotas. */
  maxCellSteps: number;
  maxCellBodies: number;
  /** Cache rows by cell index, for the cells found in the studio's cache. */
  cached: Map<number, CachedRow>;
  /** Predicted compute of the cells still to run, per chunk (0 for a fully cached chunk). */
  chunkEstimateMs: number[];
  estimatedComputeMs: number;
}

const CACHE_LOOKUP_BATCH = 10_000;

async function planSweep(db: Db, studioId: string, spec: SweepSpec, chunkOptions: ChunkOptions): Promise<Plan> {
  const axes = expandAxes(spec);
  const estimate = predictSweep(spec, { ...chunkOptions, axes });
  // Hashing every cell costs about 20 µs a cell (262,144 cells: ~5 s), so it is skipped when the
  // studio has nothing cached yet (then no cell can be a hit; the runner hashes what it runs).
  const [anyCached] = await db.select({ one: sql<number>`1` }).from(resultCache).where(eq(resultCache.studioId, studioId)).limit(1);
  const hashes: (string | null)[] = new Array(estimate.cells).fill(null);
  let steps = 0;
  let maxCellSteps = 0;
  let maxCellBodies = 0;
  forEachCellInRange(spec, axes, 0, estimate.cells, (cell) => {
    if (anyCached) hashes[cell.index] = scenarioHash(cell.scenario);
    const cellSteps = Math.ceil(cell.scenario.durationS / (cell.scenario.dtS / cell.scenario.substeps));
    steps += cellSteps;
    if (cellSteps > maxCellSteps) maxCellSteps = cellSteps;
    const bodies = bodyCount(cell.scenario);
    if (bodies > maxCellBodies) maxCellBodies = bodies;
  });
  const byHash = new Map<string, CachedRow>();
  if (anyCached) {
    // Matching in memory against the studio's cached hashes is much faster than asking the
    // database about every cell; only the hits' results are then fetched.
    const known = new Set(
      (await db.select({ scenarioHash: resultCache.scenarioHash }).from(resultCache).where(eq(resultCache.studioId, studioId))).map((r) => r.scenarioHash),
    );
    const hits = [...new Set(hashes as string[])].filter((hash) => known.has(hash));
    for (let i = 0; i < hits.length; i += CACHE_LOOKUP_BATCH) {
      // One array parameter per batch (hex hashes, safe in an array literal) instead of one parameter per hash.
      const literal = `{${hits.slice(i, i + CACHE_LOOKUP_BATCH).join(",")}}`;
      const rows = await db
        .select({ scenarioHash: resultCache.scenarioHash, metrics: resultCache.metrics, verdict: resultCache.verdict, reason: resultCache.reason })
        .from(resultCache)
        .where(and(eq(resultCache.studioId, studioId), sql`${resultCache.scenarioHash} = any(${literal}::text[])`));
      for (const row of rows) byHash.set(row.scenarioHash, row);
    }
  }
  const cached = new Map<number, CachedRow>();
  hashes.forEach((hash, index) => {
    const row = hash === null ? undefined : byHash.get(hash);
    if (row) cached.set(index, row);
  });
  // A chunk's prediction scaled by the share of its cells still to run; a fully cached chunk costs nothing.
  const chunkEstimateMs = estimate.plan.map((chunk) => {
    let misses = 0;
    for (let i = chunk.firstCell; i < chunk.firstCell + chunk.cellCount; i++) if (!cached.has(i)) misses++;
    return misses === 0 ? 0 : Math.ceil((chunk.predictedMs * misses) / chunk.cellCount);
  });
  return { spec, chunks: estimate.plan, hashes, steps, maxCellSteps, maxCellBodies, cached, chunkEstimateMs, estimatedComputeMs: chunkEstimateMs.reduce((a, b) => a + b, 0) };
}

function demandOf(plan: Plan): SweepDemand {
  return { cells: plan.hashes.length, maxCellSteps: plan.maxCellSteps, maxCellBodies: plan.maxCellBodies, estimatedComputeMs: plan.estimatedComputeMs };
}

function quoteOf(plan: Plan, balance: number, limits: QuoteLimits): Quote {
  const warnings: string[] = [];
  const cells = plan.hashes.length;
  if (plan.estimatedComputeMs > balance) warnings.push(`The estimate (${plan.estimatedComputeMs} ms) exceeds the balance (${balance} ms): buy minutes before submitting.`);
  if (cells >= limits.maxCells / 2 && cells <= limits.maxCells) warnings.push(`${cells} cells is over half the limit of ${limits.maxCells} cells per sweep.`);
  for (const violation of limits.violations) warnings.push(violation.message);
  return {
    cells,
    cachedCells: plan.cached.size,
    cellsToRun: cells - plan.cached.size,
    steps: plan.steps,
    estimatedComputeMs: plan.estimatedComputeMs,
    estimatedMinutes: Math.round((plan.estimatedComputeMs / 60_000) * 100) / 100,
    band: { lowMs: Math.floor(plan.estimatedComputeMs * QUOTE_BAND.low), highMs: Math.ceil(plan.estimatedComputeMs * QUOTE_BAND.high) },
    balanceMs: balance,
    balanceAfterMs: balance - plan.estimatedComputeMs,
    limits,
    warnings,
  };
}

export interface SubmitOptions {
  /** Chunking (tests use small chunks to exercise many of them); the server uses the defaults. */
  chunkOptions?: ChunkOptions;
}

export async function quoteSweep(db: Db, studioId: string, specInput: unknown, options: SubmitOptions = {}): Promise<Quote> {
  const spec = parseSpecOrThrow(specInput);
  const plan = await planSweep(db, studioId, spec, options.chunkOptions ?? {});
  return quoteOf(plan, await balanceMs(db, studioId), await quoteLimits(db, studioId, demandOf(plan)));
}

function newSweepId(): string {
  return `swp_${randomBytes(16).toString("base64url")}`;
}

export interface SubmitInput {
  spec: unknown;
  name?: string;
  createdByUserId?: string | null;
  /** The estimate the caller accepted (ms): a submit whose estimate has grown past it is refused (409). */
  acceptedQuoteMs?: number;
}

const CELL_INSERT_BATCH = 500;

export async function submitSweep(db: Db, studioId: string, input: SubmitInput, options: SubmitOptions = {}): Promise<Sweep> {
  const spec = parseSpecOrThrow(input.spec);
  const plan = await planSweep(db, studioId, spec, options.chunkOptions ?? {});
  const name = input.name ?? spec.name ?? "Untitled sweep";
  return db.transaction(async (tx) => {
    // Suspension, per-sweep quotas, the monthly cap and the balance, under a lock on the studio row.
    await enforceSubmitLimits(tx, studioId, demandOf(plan));
    if (input.acceptedQuoteMs !== undefined && plan.estimatedComputeMs > input.acceptedQuoteMs) {
      throw new ApiError(
        409,
        "quote_changed",
        `The estimate is now ${plan.estimatedComputeMs} ms, above the accepted quote of ${input.acceptedQuoteMs} ms: ask for a new quote.`,
        "acceptedQuoteMs",
      );
    }
    const chunkDone = plan.chunkEstimateMs.map((ms) => ms === 0);
    const chunksDone = chunkDone.filter(Boolean).length;
    const allDone = chunksDone === plan.chunks.length;
    const now = new Date();
    const [sweep] = await tx
      .insert(sweeps)
      .values({
        id: newSweepId(),
        studioId,
        name,
        spec,
        specHash: specHash(spec),
        status: allDone ? "done" : "queued",
        cells: plan.hashes.length,
        cellsDone: plan.cached.size,
        cachedCells: plan.cached.size,
        chunks: plan.chunks.length,
        chunksDone,
        estimatedComputeMs: plan.estimatedComputeMs,
        createdByUserId: input.createdByUserId ?? null,
        startedAt: allDone ? now : null,
        finishedAt: allDone ? now : null,
      })
      .returning();
    await tx.insert(sweepChunks).values(
      plan.chunks.map((chunk) => ({
        sweepId: sweep.id,
        chunkIndex: chunk.index,
        firstCell: chunk.firstCell,
        cellCount: chunk.cellCount,
        status: chunkDone[chunk.index] ? ("done" as const) : ("queued" as const),
      })),
    );
    const cachedRows = [...plan.cached].map(([index, row]) => ({
      sweepId: sweep.id,
      cellIndex: index,
      scenarioHash: row.scenarioHash,
      metrics: row.metrics,
      verdict: row.verdict,
      reason: row.reason,
      fromCache: true,
    }));
    for (let i = 0; i < cachedRows.length; i += CELL_INSERT_BATCH) await tx.insert(sweepCells).values(cachedRows.slice(i, i + CELL_INSERT_BATCH));
    return sweep;
  });
}
