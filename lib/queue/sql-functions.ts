/**
 * The queue's SQL functions, called with typed parameters and answering checked rows: the one place
 * TypeScript meets kickdrift_claim_chunks (drizzle/0009_queue_functions.sql) and
 * kickdrift_record_chunk (drizzle/0012_work_unit_record_function.sql replaced 0009's; drizzle/0020_studio_standing.sql
 * has it read the studio's standing from kickdrift_studio_standing, as lib/quotas/standing.ts does). The
 * functions are PL/pgSQL so the database plans them once per connection; their comments there say
 * what each step does. A migration that changes a function's signature changes this file with it.
 */
import "server-only";
import { sql } from "drizzle-orm";
import { z } from "@/lib/zod";
import type { DbOrTx } from "@/db/client";
import { queryRows, sqlNumber } from "@/db/rows";
import { VERDICTS } from "@/lib/physics/types";
import type { SweepSpec } from "@/lib/sweeps/spec";
import { SWEEP_STATUSES, type SweepStatus } from "@/lib/sweeps/status";

const claimedRow = z.object({
  id: sqlNumber,
  sweep_id: z.string(),
  chunk_index: sqlNumber,
  first_cell: sqlNumber,
  cell_count: sqlNumber,
  attempts: sqlNumber,
  sweep_status: z.enum(SWEEP_STATUSES),
  studio_id: z.string(),
  cached_cells: sqlNumber,
  spec_text: z.string().nullable(),
});

/** A chunk just claimed (its lease held by the claiming runner). */
export interface ClaimedChunk {
  id: number;
  sweepId: string;
  chunkIndex: number;
  firstCell: number;
  cellCount: number;
  /** Attempts so far, this one included. */
  attempts: number;
  /** The sweep's status before the claim ("queued" when this claim started it). */
  sweepStatus: SweepStatus;
  studioId: string;
  /** Cells of the sweep served from the result cache at submit (partial results rows may exist). */
  cachedCells: number;
  /**
   * The sweep's spec, on the first chunk of each sweep the claim returned that is not among
   * `knownSweeps`; null otherwise (the runner already has it).
   */
  spec: SweepSpec | null;
}

export interface ClaimParams {
  /** The claiming runner's id (lease owner). */
  owner: string;
  leaseMs: number;
  /** Chunks wanted at most. */
  limit: number;
  /** Running sweeps per studio when its quotas row sets none (lib/quotas/plan.ts PLAN_DEFAULTS). */
  defaultMaxRunningSweeps: number;
  /** Sweeps whose spec the caller has already: their chunks come without it. */
  knownSweeps?: readonly string[];
}

/**
 * Claim up to `limit` queued chunks in one statement, fair share between studios, starting queued
 * sweeps within their studio's limit of running sweeps; ordered by sweep and chunk index. The same
 * statement answers what the runner needs of each sweep new to it (studio, spec, cached cells), so
 * a new sweep's first chunk starts without another round trip to the database.
 */
export async function claimChunks(db: DbOrTx, p: ClaimParams): Promise<ClaimedChunk[]> {
  const known = p.knownSweeps ?? [];
  // The function runs once (a materialized CTE); the join reads the sweeps' unchanging columns.
  const rows = await queryRows(
    db,
    sql`
      with c as materialized (
        select * from kickdrift_claim_chunks(${p.owner}::text, ${p.leaseMs / 1000}::double precision, ${p.limit}::integer, ${p.defaultMaxRunningSweeps}::integer) with ordinality
      )
      select c.id, c.sweep_id, c.chunk_index, c.first_cell, c.cell_count, c.attempts, c.sweep_status, s.studio_id, s.cached_cells,
        case when row_number() over (partition by c.sweep_id order by c.ordinality) = 1
          and not (c.sweep_id = any(${sqlTextArray(known)})) then s.spec::text end as spec_text
      from c join sweeps s on s.id = c.sweep_id
      order by c.ordinality`,
    claimedRow,
  );
  return rows.map((row) => ({
    id: row.id,
    sweepId: row.sweep_id,
    chunkIndex: row.chunk_index,
    firstCell: row.first_cell,
    cellCount: row.cell_count,
    attempts: row.attempts,
    sweepStatus: row.sweep_status,
    studioId: row.studio_id,
    cachedCells: row.cached_cells,
    spec: row.spec_text === null ? null : (JSON.parse(row.spec_text) as SweepSpec),
  }));
}

/** A text[] parameter (an empty list matches nothing). */
function sqlTextArray(values: readonly string[]) {
  return values.length === 0 ? sql`array[]::text[]` : sql`array[${sql.join(values.map((v) => sql`${v}`), sql`, `)}]::text[]`;
}

const recordRow = z.object({
  recorded: sqlNumber,
  new_status: z.enum(SWEEP_STATUSES).nullable(),
  sweep_status: z.enum(SWEEP_STATUSES).nullable(),
  easy: sqlNumber,
  billed_ms: sqlNumber,
});

export interface RecordParams {
  /** The runner that must still hold the chunk's lease. */
  owner: string;
  chunkId: number;
  sweepId: string;
  studioId: string;
  /** Cells in the stored blob (all the chunk's cells: cached ones are merged in). */
  cellsInBlob: number;
  /** Cells this run simulated (the chunk's cells less those served from the cache). */
  cellsRun: number;
  workUnits: number;
  wallMs: number;
  /** lib/sweeps/metering.ts WORK_UNITS_PER_BILLED_MS. */
  unitsPerMs: number;
  /** The stored blob (lib/queue/result-store.ts putBlob). */
  blob: { bytes: number; location: string | null; data: Uint8Array | null };
  /** Cells of this run by verdict code (the order of VERDICTS, as lib/sweeps/packed.ts verdictTally counts them). */
  tallyByCode: readonly number[];
  /** The debit's idempotency key (lib/ledger/ledger.ts usageKey). */
  key: string;
  memo: string;
  /** The calendar month whose usage counts against the cap. */
  month: { start: Date; end: Date };
  /** Below this balance (ms) a debit goes the careful way (lib/billing/packs.ts LOW_BALANCE_MS). */
  lowBalanceMs: number;
  /** The monthly cap (ms) when the studio's quotas row sets none. */
  defaultCapMs: number;
  /** Usage at or past this percent of the cap goes the careful way (the first cap alert). */
  firstAlertPercent: number;
  /** Record only if the debit is easy (far from every limit); else leave the chunk as it is. */
  onlyIfEasy: boolean;
}

/** What recording a chunk did. */
export interface RecordOutcome {
  /** The chunk was marked done, its results stored and its sweep's counters moved. */
  recorded: boolean;
  /** The sweep's status after recording (null when not recorded). */
  newStatus: SweepStatus | null;
  /** The sweep's status before recording (null when the sweep is gone). */
  sweepStatus: SweepStatus | null;
  /** Far from every limit: the debit was made by the function itself. */
  easy: boolean;
  /** The chunk's debit (ms): made here when easy, else for the caller to make (lib/billing/usage.ts). */
  billedMs: number;
}

/** Record a finished chunk in one statement (see kickdrift_record_chunk). */
export async function recordChunk(db: DbOrTx, p: RecordParams): Promise<RecordOutcome | null> {
  const tally = JSON.stringify(Object.fromEntries(VERDICTS.map((verdict, code) => [verdict, p.tallyByCode[code]])));
  const [row] = await queryRows(
    db,
    sql`
      select * from kickdrift_record_chunk(
        ${p.owner}::text, ${p.chunkId}::integer, ${p.sweepId}::text, ${p.studioId}::text,
        ${p.cellsInBlob}::integer, ${p.cellsRun}::integer, ${p.workUnits}::bigint, ${p.wallMs}::bigint, ${p.unitsPerMs}::bigint,
        ${p.blob.bytes}::integer, ${p.blob.location}::text, ${p.blob.data}::bytea, ${tally}::jsonb,
        ${p.key}::text, ${p.memo}::text, ${p.month.start.toISOString()}::timestamptz, ${p.month.end.toISOString()}::timestamptz,
        ${p.lowBalanceMs}::bigint, ${p.defaultCapMs}::bigint, ${p.firstAlertPercent}::integer, ${p.onlyIfEasy}::boolean)`,
    recordRow,
  );
  if (!row) return null;
  return { recorded: row.recorded > 0, newStatus: row.new_status, sweepStatus: row.sweep_status, easy: row.easy > 0, billedMs: row.billed_ms };
}
