/**
 * Rows of a raw SQL statement (`db.execute`), checked against a zod schema instead of cast.
 *
 * The two drivers (PGlite, node-postgres) both answer `execute` with an object holding `rows`, but
 * Drizzle's shared type does not say so, and they disagree on some column types: node-postgres
 * returns `bigint` and `count(*)` as strings, PGlite as numbers; timestamps come as Date or string.
 * The field helpers below accept either and give one type, so a caller never guesses.
 */
import "server-only";
import type { SQL } from "drizzle-orm";
// zod itself, not lib/zod.ts: the database layer imports nothing of the app, and runs only on the server.
import { z } from "zod";
import type { DbOrTx } from "./client";

/** A whole number column (integer, bigint, count): number, numeric string or BigInt → number. */
export const sqlNumber = z.union([z.number(), z.string(), z.bigint()]).transform(Number).pipe(z.number().finite());

/** A timestamp column: Date or its text → Date. */
export const sqlDate = z.union([z.date(), z.string()]).transform((value) => new Date(value));

/** Runs `query` and returns its rows, each checked by `row`; a row that does not fit throws, naming the column. */
export async function queryRows<T extends z.ZodType>(db: DbOrTx, query: SQL, row: T): Promise<z.output<T>[]> {
  const result: unknown = await db.execute(query);
  return z.object({ rows: z.array(row) }).parse(result).rows;
}
