/** Lookups and policies shared by the sweep route handlers. */
import "server-only";
import { and, asc, count, desc, eq, ilike, isNotNull, type SQL } from "drizzle-orm";
import type { Db } from "@/db/client";
import { sweeps, users, type Sweep } from "@/db/schema";
import { SWEEP_STATUSES, type SweepStatus } from "@/lib/sweeps/status";
import { ApiError } from "@/lib/errors";
import { z } from "@/lib/zod";
import { SPEC_LIMITS } from "@/lib/sweeps/parameters";
import { sweepView } from "./views";

/** The sweep, if it belongs to the studio; otherwise the same 404 as a sweep that does not exist. */
export async function sweepOfStudio(db: Db, studioId: string, sweepId: string): Promise<Sweep> {
  const [sweep] = await db
    .select()
    .from(sweeps)
    .where(and(eq(sweeps.id, sweepId), eq(sweeps.studioId, studioId)));
  if (!sweep) throw new ApiError("not_found", "Sweep not found.");
  return sweep;
}

/** A cell index from the URL: a plain non-negative integer below the sweep's cell count, else 404. */
export function cellIndexParam(raw: string, sweep: Sweep): number {
  if (!/^(0|[1-9][0-9]{0,8})$/.test(raw)) throw new ApiError("not_found", `Cell "${raw}" not found: a cell index is an integer from 0 to ${sweep.cells - 1}.`);
  const index = Number(raw);
  if (index >= sweep.cells) throw new ApiError("not_found", `Cell ${index} not found: the sweep has cells 0 to ${sweep.cells - 1}.`);
  return index;
}

export const MAX_PAGE_SIZE = 100;

export interface ListQuery {
  status?: SweepStatus;
  /** Words the sweep's name contains (case-insensitive). */
  q?: string;
  /** The id of the member who created the sweeps. */
  createdBy?: string;
  page: number;
  pageSize: number;
}

/** Longest search text of the sweeps list (a name is at most SPEC_LIMITS.maxNameLength long). */
export const MAX_SEARCH_LENGTH = SPEC_LIMITS.maxNameLength;

function intParam(url: URL, name: string, fallback: number, min: number, max: number): number {
  const raw = url.searchParams.get(name);
  if (raw === null || raw === "") return fallback;
  if (!/^[0-9]{1,9}$/.test(raw) || Number(raw) < min || Number(raw) > max)
    throw new ApiError("validation_failed", `${name} must be an integer from ${min} to ${max}; got "${raw}".`, name);
  return Number(raw);
}

export function parseListQuery(url: URL): ListQuery {
  const status = url.searchParams.get("status");
  if (status !== null && status !== "" && !(SWEEP_STATUSES as readonly string[]).includes(status))
    throw new ApiError("validation_failed", `status must be one of ${SWEEP_STATUSES.join(", ")}; got "${status}".`, "status");
  const q = (url.searchParams.get("q") ?? "").trim();
  if (q.length > MAX_SEARCH_LENGTH) throw new ApiError("validation_failed", `q must be at most ${MAX_SEARCH_LENGTH} characters; got ${q.length}.`, "q");
  const createdBy = (url.searchParams.get("createdBy") ?? "").trim();
  if (createdBy.length > 200) throw new ApiError("validation_failed", `createdBy must be a member id of at most 200 characters; got ${createdBy.length}.`, "createdBy");
  return {
    status: status ? (status as SweepStatus) : undefined,
    ...(q ? { q } : {}),
    ...(createdBy ? { createdBy } : {}),
    page: intParam(url, "page", 1, 1, 1_000_000),
    pageSize: intParam(url, "pageSize", 20, 1, MAX_PAGE_SIZE),
  };
}

/** A LIKE pattern matching `text` literally anywhere (%, _ and the escape character escaped). */
function containsPattern(text: string): string {
  return `%${text.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
}

export async function listSweeps(db: Db, studioId: string, query: ListQuery): Promise<{ rows: Sweep[]; total: number }> {
  const conditions: SQL[] = [eq(sweeps.studioId, studioId)];
  if (query.status) conditions.push(eq(sweeps.status, query.status));
  if (query.q) conditions.push(ilike(sweeps.name, containsPattern(query.q)));
  if (query.createdBy) conditions.push(eq(sweeps.createdByUserId, query.createdBy));
  const where = and(...conditions);
  const [[{ n }], rows] = await Promise.all([
    db.select({ n: count() }).from(sweeps).where(where),
    db
      .select()
      .from(sweeps)
      .where(where)
      .orderBy(desc(sweeps.createdAt), desc(sweeps.id))
      .limit(query.pageSize)
      .offset((query.page - 1) * query.pageSize),
  ]);
  return { rows, total: Number(n) };
}

/** The members who created any of the studio's sweeps (the list's "Created by" choices), by name. */
export async function sweepCreators(db: Db, studioId: string): Promise<{ id: string; name: string }[]> {
  const rows = await db
    .selectDistinct({ id: users.id, name: users.name, email: users.email })
    .from(sweeps)
    .innerJoin(users, eq(users.id, sweeps.createdByUserId))
    .where(and(eq(sweeps.studioId, studioId), isNotNull(sweeps.createdByUserId)))
    .orderBy(asc(users.name), asc(users.email));
  return rows.map((row) => ({ id: row.id, name: row.name || row.email }));
}

/**
 * One page of the sweeps list as `GET …/sweeps` answers it (the sweeps page renders the first page
 * with itself from the same function). The page and the creators are read together.
 */
export async function sweepsListPage(db: Db, studioId: string, query: ListQuery) {
  const [{ rows, total }, creators] = await Promise.all([listSweeps(db, studioId, query), sweepCreators(db, studioId)]);
  const names = new Map(creators.map((creator) => [creator.id, creator.name]));
  const list = await Promise.all(
    rows.map(async (sweep) => ({ ...(await sweepView(db, sweep)), createdBy: sweep.createdByUserId ? { id: sweep.createdByUserId, name: names.get(sweep.createdByUserId) ?? "" } : null })),
  );
  return { sweeps: list, page: query.page, pageSize: query.pageSize, total, creators };
}

/** The response header of the cells route that carries the sweep's change cursor (JSON and CSV alike). */
export const CURSOR_HEADER = "x-kickdrift-cursor";

/** The largest change cursor there can be (sweep_results.recorded_seq is a PostgreSQL bigint). */
export const MAX_CURSOR = 9_223_372_036_854_775_807n;

/**
 * `?after=` of the cells route: a cursor an earlier answer gave (a whole number from 0 to
 * MAX_CURSOR, decimal digits only), or null when the query has none. Anything else is a 400
 * naming `after`: a negative, fractional, exponent or text value is never read as some other number.
 */
export function cursorParam(url: URL, name = "after"): bigint | null {
  const raw = url.searchParams.get(name);
  if (raw === null) return null;
  const shown = raw.length > 40 ? `${raw.slice(0, 40)}…` : raw;
  const limit = `${name} must be a whole number from 0 to ${MAX_CURSOR} (the cursor of an earlier answer); got "${shown}".`;
  if (!/^[0-9]{1,19}$/.test(raw)) throw new ApiError("validation_failed", limit, name);
  const value = BigInt(raw);
  if (value > MAX_CURSOR) throw new ApiError("validation_failed", limit, name);
  return value;
}

// Request bodies of the sweep routes (the OpenAPI document, lib/api/openapi, is generated from these).

/** POST …/quotes: the spec to quote (checked by the sweep spec schema in lib/sweeps/spec.ts). */
export const quoteRequestSchema = z.strictObject({ spec: z.unknown().optional() });

/** POST …/sweeps. */
export const submitSweepRequestSchema = z.strictObject({
  spec: z.unknown().optional(),
  name: z
    .string({ error: "name must be a string" })
    .trim()
    .min(1, { error: "name must not be empty" })
    .max(SPEC_LIMITS.maxNameLength, { error: `name must be at most ${SPEC_LIMITS.maxNameLength} characters` })
    .optional(),
  acceptedQuoteMs: z
    .number({ error: "acceptedQuoteMs must be an integer number of milliseconds" })
    .int({ error: "acceptedQuoteMs must be an integer number of milliseconds" })
    .min(0, { error: "acceptedQuoteMs must be ≥ 0" })
    .optional(),
});

const MIN_DT_FACTOR = 0.001;
/** POST …/cells/{index}/rerun: the cell again at a smaller timestep. */
export const rerunRequestSchema = z.strictObject({
  dtFactor: z
    .number({ error: `dtFactor must be a number from ${MIN_DT_FACTOR} to 1` })
    .min(MIN_DT_FACTOR, { error: `dtFactor must be a number from ${MIN_DT_FACTOR} to 1` })
    .max(1, { error: `dtFactor must be a number from ${MIN_DT_FACTOR} to 1` })
    .default(0.25),
  acceptedQuoteMs: z
    .number({ error: "acceptedQuoteMs must be an integer number of milliseconds" })
    .int({ error: "acceptedQuoteMs must be an integer number of milliseconds" })
    .min(0, { error: "acceptedQuoteMs must be ≥ 0" })
    .optional(),
});

/** POST …/cells/{index}/rerun/quote: the quote of that re-run (nothing is started). */
export const rerunQuoteRequestSchema = z.strictObject({
  dtFactor: rerunRequestSchema.shape.dtFactor,
});
