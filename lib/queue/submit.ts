/**
 * Quotes and submission of sweeps. Submission validates, predicts, matches cells against the
 * studio's stored results (the result cache), checks the balance, then writes the sweep, its
 * chunks and the results rows of its cached cells in ONE transaction: on any error nothing is
 * queued. (With the file result store, the cached cells' blobs are written just before that
 * transaction, under the new sweep's id: nothing points at them unless it commits.)
 */
import "server-only";
import { randomBytes } from "node:crypto";
import { and, eq, sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { ledgerEntries, sweepChunks, sweepResults, sweeps, type Sweep } from "@/db/schema";
import { centsForMs, formatCompute } from "@/lib/billing/format";
import { CREDIT_PACKS, OVERAGE_CENTS_PER_MINUTE } from "@/lib/billing/packs";
import { ApiError } from "@/lib/errors";
import { balanceMs } from "@/lib/quotas/standing";
import { enforceSubmitLimits, quoteLimits, type QuoteLimits, type SweepDemand } from "@/lib/quotas/enforce";
import { VERDICTS } from "@/lib/physics/types";
import { KeyTable, scenarioKey } from "@/lib/sweeps/cell-key";
import { keysOfCells } from "@/lib/sweeps/chunk-task";
import type { ChunkOptions, ChunkPlan } from "@/lib/sweeps/chunks";
import { predictSweep } from "@/lib/sweeps/chunks";
import { meterSweep, type Metering, type SweepMeter } from "@/lib/sweeps/metering";
import { expandAxes, forEachCellInRange } from "@/lib/sweeps/grid";
import { specHash } from "@/lib/sweeps/hash";
import { KEY_WORDS, PackedView, PackedWriter, ROTATION_METRICS_VERSION } from "@/lib/sweeps/packed";
import { measuresRotation } from "@/lib/physics/spin-metrics";
import { bodyCount, cornerScenarios, parseSweepSpec, stepsPerCell, type SweepSpec } from "@/lib/sweeps/spec";
import { putBlob, readBlob, type StoredBlob } from "./result-store";

export interface Quote {
  cells: number;
  cachedCells: number;
  cellsToRun: number;
  steps: number;
  /** How the sweep will be billed (lib/sweeps/metering.ts). */
  metering: Metering;
  /** The most the sweep can be billed (ms): reserved against balance and monthly cap at submit, never exceeded. */
  ceilingMs: number;
  /** The expected bill (ms), from a sample of the cells run through the engine; never above the ceiling. */
  expectedMs: number;
  /** The same as expectedMs (the name earlier clients read). */
  estimatedComputeMs: number;
  /** Cells the expected figure ran (all cells to run when they were cheap enough: then it is the bill). */
  sampledCells: number;
  balanceMs: number;
  /** The balance after the expected bill; at worst (the ceiling) balanceMs − ceilingMs. */
  balanceAfterMs: number;
  /** What the ceiling and the expected bill cost in money, before tax. */
  money: QuoteMoney;
  /** The studio's effective limits, what is used and what remains; `violations` lists what submit would refuse. */
  limits: QuoteLimits;
  warnings: string[];
}

export interface QuoteMoney {
  /** Of the ceiling, the part drawn from prepaid minutes and the part past the balance (overage, when allowed). */
  ceilingPrepaidMs: number;
  ceilingOverageMs: number;
  /** The studio's price of a prepaid minute (tenths of a cent): the average of its pack purchases, else the list price of the smallest pack. */
  prepaidTenthsOfCentPerMinute: number;
  prepaidPriceSource: "purchases" | "list price";
  overageTenthsOfCentPerMinute: number;
  /** Integer cents, rounded up: prepaid part at the prepaid price plus overage at the overage price. */
  ceilingCents: number;
  expectedCents: number;
}

/** Parses a spec from a request body; field paths are prefixed with "spec." as the body names them. */
export function parseSpecOrThrow(input: unknown, prefix = "spec"): SweepSpec {
  if (input === undefined) throw new ApiError("invalid_spec", `${prefix}: a sweep spec is required.`, prefix, [{ field: prefix, message: "a sweep spec is required" }]);
  const parsed = parseSweepSpec(input);
  if (parsed.ok) return parsed.spec;
  const issues = parsed.issues.map((issue) => ({
    field: issue.field === "(spec)" ? prefix : `${prefix}.${issue.field}`,
    message: issue.message,
  }));
  throw new ApiError("invalid_spec", `${issues[0].field}: ${issues[0].message}`, issues[0].field, issues);
}

interface Plan {
  spec: SweepSpec;
  cells: number;
  chunks: ChunkPlan[];
  steps: number;
  /** The largest step count and body count of any cell (at the grid's corners), for the per-sweep quotas. */
  maxCellSteps: number;
  maxCellBodies: number;
  /** Per cell index: the stored result it reuses (index into `sources`, and position there), or −1. */
  hitSource: Int32Array | null;
  hitPosition: Int32Array | null;
  cachedCells: number;
  sources: PackedView[];
  /** Ceiling and expected work of the cells still to run, per chunk (a fully cached chunk has none). */
  meter: SweepMeter;
}

/**
 * Match the sweep's cells against every stored result of the studio by scenario key. Only done
 * when the studio has stored results: a first sweep pays nothing for the cache.
 */
async function matchCache(db: Db, studioId: string, spec: SweepSpec, cells: number): Promise<Pick<Plan, "hitSource" | "hitPosition" | "cachedCells" | "sources">> {
  const none = { hitSource: null, hitPosition: null, cachedCells: 0, sources: [] };
  const [anyStored] = await db.select({ one: sql<number>`1` }).from(sweepResults).where(eq(sweepResults.studioId, studioId)).limit(1);
  if (!anyStored) return none;
  const keys = new Uint32Array(cells * KEY_WORDS);
  // Cells whose runs return the rotation metrics: runs stored before packed format 3 lack them, so they serve only the other cells.
  const rotation = new Uint8Array(cells);
  forEachCellInRange(spec, expandAxes(spec), 0, cells, (cell) => {
    scenarioKey(cell.scenario, keys, cell.index * KEY_WORDS);
    if (measuresRotation(cell.scenario)) rotation[cell.index] = 1;
  });
  // Key → first cell with it; later cells with the same key chain from there.
  const table = new KeyTable(cells);
  const nextSame = new Int32Array(cells).fill(-1);
  const lastSame = new Int32Array(cells);
  for (let i = 0; i < cells; i++) {
    const first = table.insert(keys, i * KEY_WORDS, i);
    if (first !== i) nextSame[lastSame[first]] = i;
    lastSame[first] = i;
  }
  const hitSource = new Int32Array(cells).fill(-1);
  const hitPosition = new Int32Array(cells);
  const sources: PackedView[] = [];
  let cachedCells = 0;
  const rows = await db.select().from(sweepResults).where(eq(sweepResults.studioId, studioId)).orderBy(sweepResults.id);
  // Runs are stored without keys and keyed while the pool is idle (lib/queue/runner.ts): a run not
  // keyed yet is keyed here from its sweep's spec, so the cache never misses a stored cell.
  const specs = new Map<string, SweepSpec>();
  for (const row of rows) {
    const view = new PackedView(await readBlob(row));
    let storedKeys = view.keys;
    if (!view.hasKeys) {
      let storedSpec = specs.get(row.sweepId);
      if (!storedSpec) {
        const [owner] = await db.select({ spec: sweeps.spec }).from(sweeps).where(eq(sweeps.id, row.sweepId));
        if (!owner) continue;
        storedSpec = owner.spec;
        specs.set(row.sweepId, storedSpec);
      }
      storedKeys = keysOfCells(storedSpec, view.indices);
    }
    let used = false;
    for (let n = 0; n < view.count; n++) {
      const first = table.get(storedKeys, n * KEY_WORDS);
      if (first < 0 || hitSource[first] !== -1 || (rotation[first] === 1 && view.storedVersion < ROTATION_METRICS_VERSION)) continue;
      for (let cell = first; cell !== -1; cell = nextSame[cell]) {
        hitSource[cell] = sources.length;
        hitPosition[cell] = n;
        cachedCells++;
      }
      used = true;
    }
    if (used) sources.push(view);
    if (cachedCells === cells) break;
  }
  return cachedCells === 0 ? none : { hitSource, hitPosition, cachedCells, sources };
}

/** Studios' specs whose sample units are remembered, at most (the oldest is forgotten first). */
const SAMPLES_REMEMBERED = 256;
const sampleUnitsBySpec = new Map<string, Map<number, number>>();

/**
 * The expected figure's sample units (by cell index) already measured for this studio and spec: the
 * quote measures them, and the submit that follows it (the sweep page quotes, the studio accepts,
 * the page submits with the accepted ceiling) reuses them instead of running the sample cells again
 * on the main thread. A cell's units depend on its scenario alone, so the figures are the same.
 * Kept per studio, so one studio's quote never speeds up another's submit.
 */
function rememberedSampleUnits(studioId: string, spec: SweepSpec): Map<number, number> {
  const key = `${studioId}\n${specHash(spec)}`;
  const units = sampleUnitsBySpec.get(key) ?? new Map<number, number>();
  sampleUnitsBySpec.delete(key);
  sampleUnitsBySpec.set(key, units);
  if (sampleUnitsBySpec.size > SAMPLES_REMEMBERED) sampleUnitsBySpec.delete(sampleUnitsBySpec.keys().next().value as string);
  return units;
}

async function planSweep(db: Db, studioId: string, spec: SweepSpec, chunkOptions: ChunkOptions): Promise<Plan> {
  const axes = expandAxes(spec);
  const estimate = predictSweep(spec, { ...chunkOptions, axes });
  const cache = await matchCache(db, studioId, spec, estimate.cells);
  // Cached cells cost nothing: they are left out of the ceiling and the expected figure.
  const hits = cache.hitSource;
  const meter = meterSweep(spec, estimate.plan, hits ? (index) => hits[index] !== -1 : undefined, axes, rememberedSampleUnits(studioId, spec));
  const corners = cornerScenarios(spec);
  return {
    spec,
    cells: estimate.cells,
    chunks: estimate.plan,
    steps: estimate.steps,
    maxCellSteps: Math.max(...corners.map(stepsPerCell)),
    maxCellBodies: Math.max(...corners.map(bodyCount)),
    ...cache,
    meter,
  };
}

/** The cached cells of one chunk, packed in index order (null when none of its cells is cached). */
function cachedChunk(plan: Plan, chunk: ChunkPlan): { packed: Uint8Array; cells: number; tally: number[] } | null {
  const { hitSource, hitPosition } = plan;
  if (!hitSource || !hitPosition) return null;
  let cells = 0;
  for (let i = chunk.firstCell; i < chunk.firstCell + chunk.cellCount; i++) if (hitSource[i] !== -1) cells++;
  if (cells === 0) return null;
  const writer = new PackedWriter(cells);
  const tally = new Array<number>(VERDICTS.length).fill(0);
  for (let i = chunk.firstCell; i < chunk.firstCell + chunk.cellCount; i++) {
    if (hitSource[i] === -1) continue;
    const source = plan.sources[hitSource[i]];
    writer.copyAs(source, hitPosition[i], i);
    tally[source.verdicts[hitPosition[i]]]++;
  }
  return { packed: writer.finish(), cells, tally };
}

function demandOf(plan: Plan): SweepDemand {
  return { cells: plan.cells, maxCellSteps: plan.maxCellSteps, maxCellBodies: plan.maxCellBodies, ceilingMs: plan.meter.ceilingMs };
}

/** The studio's price of a prepaid minute in tenths of a cent: what its pack purchases cost on average, else the smallest pack's list price. */
async function prepaidPrice(db: Db, studioId: string): Promise<{ tenths: number; source: QuoteMoney["prepaidPriceSource"] }> {
  const [row] = await db
    .select({ cents: sql<string>`coalesce(sum(${ledgerEntries.amountCents}), 0)`, ms: sql<string>`coalesce(sum(${ledgerEntries.computeMs}), 0)` })
    .from(ledgerEntries)
    .where(and(eq(ledgerEntries.studioId, studioId), eq(ledgerEntries.kind, "purchase")));
  const cents = Number(row?.cents ?? 0);
  const ms = Number(row?.ms ?? 0);
  if (cents > 0 && ms > 0) return { tenths: Math.round((cents * 600_000) / ms), source: "purchases" };
  const pack = CREDIT_PACKS[0];
  return { tenths: Math.round((pack.priceCents * 10) / pack.minutes), source: "list price" };
}

function moneyOf(ms: number, balance: number, overageHeadroomMs: number, price: { tenths: number }): { prepaidMs: number; overageMs: number; cents: number } {
  const prepaidMs = Math.min(ms, Math.max(0, balance));
  const overageMs = Math.min(ms - prepaidMs, overageHeadroomMs);
  const overageTenths = OVERAGE_CENTS_PER_MINUTE * 10;
  return { prepaidMs, overageMs, cents: centsForMs(prepaidMs, price.tenths) + centsForMs(overageMs, overageTenths) };
}

function quoteOf(plan: Plan, balance: number, limits: QuoteLimits, price: { tenths: number; source: QuoteMoney["prepaidPriceSource"] }): Quote {
  const warnings: string[] = [];
  const cells = plan.cells;
  const { ceilingMs, expectedMs } = plan.meter;
  const reservable = Math.max(0, balance - limits.monthReservedMs) + limits.overageRemainingMs;
  if (ceilingMs > reservable && !limits.violations.some((v) => v.name === "balance"))
    warnings.push(`The ceiling (${formatCompute(ceilingMs)}) is more than the balance: buy minutes before submitting.`);
  if (cells >= limits.maxCells / 2 && cells <= limits.maxCells) warnings.push(`${cells} cells is over half the limit of ${limits.maxCells} cells per sweep.`);
  for (const violation of limits.violations) warnings.push(violation.message);
  const ceiling = moneyOf(ceilingMs, balance - limits.monthReservedMs, limits.overageRemainingMs, price);
  const expected = moneyOf(expectedMs, balance - limits.monthReservedMs, limits.overageRemainingMs, price);
  return {
    cells,
    cachedCells: plan.cachedCells,
    cellsToRun: cells - plan.cachedCells,
    steps: plan.steps,
    metering: plan.meter.metering,
    ceilingMs,
    expectedMs,
    estimatedComputeMs: expectedMs,
    sampledCells: plan.meter.sampledCells,
    balanceMs: balance,
    balanceAfterMs: balance - expectedMs,
    money: {
      ceilingPrepaidMs: ceiling.prepaidMs,
      ceilingOverageMs: ceiling.overageMs,
      prepaidTenthsOfCentPerMinute: price.tenths,
      prepaidPriceSource: price.source,
      overageTenthsOfCentPerMinute: OVERAGE_CENTS_PER_MINUTE * 10,
      ceilingCents: ceiling.cents,
      expectedCents: expected.cents,
    },
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
  return quoteOf(plan, await balanceMs(db, studioId), await quoteLimits(db, studioId, demandOf(plan)), await prepaidPrice(db, studioId));
}

function newSweepId(): string {
  return `swp_${randomBytes(16).toString("base64url")}`;
}

export interface SubmitInput {
  spec: unknown;
  name?: string;
  createdByUserId?: string | null;
  /** The quote ceiling the caller accepted (ms): a submit whose ceiling has grown past it is refused (409). */
  acceptedQuoteMs?: number;
  /** A re-run of one cell of another sweep (its page compares the two). */
  rerunOf?: { sweepId: string; cellIndex: number };
}

export async function submitSweep(db: Db, studioId: string, input: SubmitInput, options: SubmitOptions = {}): Promise<Sweep> {
  const spec = parseSpecOrThrow(input.spec);
  const plan = await planSweep(db, studioId, spec, options.chunkOptions ?? {});
  const name = input.name ?? spec.name ?? "Untitled sweep";
  const sweepId = newSweepId();
  const cachedRows: { chunk: ChunkPlan; cells: number; blob: StoredBlob }[] = [];
  const verdictCounts: Record<string, number> = Object.fromEntries(VERDICTS.map((verdict) => [verdict, 0]));
  const checkLimits = async (tx: Parameters<Parameters<Db["transaction"]>[0]>[0] | Db) => {
    // Suspension, per-sweep quotas, the monthly cap and the balance (plus allowed overage), under a
    // lock on the studio row when inside the transaction.
    await enforceSubmitLimits(tx, studioId, demandOf(plan));
    if (input.acceptedQuoteMs !== undefined && plan.meter.ceilingMs > input.acceptedQuoteMs) {
      throw new ApiError("quote_changed",
        `The ceiling is now ${plan.meter.ceilingMs} ms, above the accepted quote of ${input.acceptedQuoteMs} ms: ask for a new quote.`,
        "acceptedQuoteMs",
      );
    }
  };
  if (plan.cachedCells > 0) {
    // Checked before any file is written (and again inside the transaction).
    await checkLimits(db);
    for (const chunk of plan.chunks) {
      const cached = cachedChunk(plan, chunk);
      if (!cached) continue;
      cachedRows.push({ chunk, cells: cached.cells, blob: await putBlob(sweepId, chunk.index, "cached", cached.packed) });
      cached.tally.forEach((n, code) => (verdictCounts[VERDICTS[code]] += n));
    }
  }
  return db.transaction(async (tx) => {
    await checkLimits(tx);
    // A chunk whose cells all came from the cache is done at submit and costs nothing.
    const chunkDone = plan.meter.chunks.map((chunk) => chunk.ceilingUnits === 0);
    const chunksDone = chunkDone.filter(Boolean).length;
    const allDone = chunksDone === plan.chunks.length;
    const now = new Date();
    const [sweep] = await tx
      .insert(sweeps)
      .values({
        id: sweepId,
        studioId,
        name,
        spec,
        specHash: specHash(spec),
        status: allDone ? "done" : "queued",
        cells: plan.cells,
        cellsDone: plan.cachedCells,
        cachedCells: plan.cachedCells,
        chunks: plan.chunks.length,
        chunksDone,
        verdictCounts,
        estimatedComputeMs: plan.meter.expectedMs,
        metering: plan.meter.metering,
        ceilingMs: plan.meter.ceilingMs,
        createdByUserId: input.createdByUserId ?? null,
        rerunOfSweepId: input.rerunOf?.sweepId ?? null,
        rerunOfCellIndex: input.rerunOf?.cellIndex ?? null,
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
        ceilingMs: plan.meter.chunks[chunk.index].ceilingMs,
        status: chunkDone[chunk.index] ? ("done" as const) : ("queued" as const),
      })),
    );
    if (cachedRows.length > 0) {
      await tx.insert(sweepResults).values(
        cachedRows.map(({ chunk, cells, blob }) => ({
          sweepId: sweep.id,
          studioId,
          chunkIndex: chunk.index,
          cells,
          complete: cells === chunk.cellCount,
          bytes: blob.bytes,
          location: blob.location,
          data: blob.data,
        })),
      );
    }
    return sweep;
  });
}
