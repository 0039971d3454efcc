/**
 * db/rows.ts: the rows of a raw statement are checked, not cast. The two drivers answer the same
 * query with different JavaScript types (node-postgres: bigint and count(*) as strings, timestamps
 * as Date; PGlite: numbers, and text for some timestamps), and a caller must get one type from
 * either, or a clear error naming the column — never a string where a number was promised.
 */
import { sql } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { z } from "zod";
import type { DbOrTx } from "@/db/client";
import { queryRows, sqlDate, sqlNumber } from "@/db/rows";

/** A database whose raw statement answers `rows` (the shape both drivers share). */
function answering(rows: unknown[]): DbOrTx {
  return { execute: async () => ({ rows, fields: [] }) } as unknown as DbOrTx;
}

const row = z.object({ id: sqlNumber, billed_ms: sqlNumber, created_at: sqlDate, status: z.enum(["queued", "running"]) });

describe("queryRows", () => {
  it("gives numbers and dates whichever driver's types the columns came in", async () => {
    const at = "2026-03-01T12:00:00.000Z"; // any instant: the check is that both spellings give the same Date
    const nodePostgres = await queryRows(answering([{ id: 7, billed_ms: "9007199254740", created_at: new Date(at), status: "queued" }]), sql`select 1`, row);
    const pglite = await queryRows(answering([{ id: 7, billed_ms: 9007199254740n, created_at: at, status: "queued" }]), sql`select 1`, row);
    expect(nodePostgres).toEqual([{ id: 7, billed_ms: 9_007_199_254_740, created_at: new Date(at), status: "queued" }]);
    expect(pglite).toEqual(nodePostgres);
  });

  it("refuses a row that does not fit, naming the column, instead of passing it on", async () => {
    await expect(queryRows(answering([{ id: 1, billed_ms: "not a number", created_at: new Date(), status: "queued" }]), sql`select 1`, row)).rejects.toThrow(/billed_ms/);
    await expect(queryRows(answering([{ id: 1, billed_ms: 0, created_at: new Date(), status: "paused" }]), sql`select 1`, row)).rejects.toThrow(/status/);
  });

  it("answers no rows as an empty list", async () => {
    expect(await queryRows(answering([]), sql`select 1`, row)).toEqual([]);
  });
});
