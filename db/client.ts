import "server-only";
import { mkdirSync } from "node:fs";
import path from "node:path";
import type { PgDatabase, PgQueryResultHKT } from "drizzle-orm/pg-core";
import * as schema from "./schema";

/** The query API shared by the PGlite and node-postgres drivers. */
export type Db = PgDatabase<PgQueryResultHKT, typeof schema>;
/** A database handle or a transaction on it. */
export type DbOrTx = Db | Parameters<Parameters<Db["transaction"]>[0]>[0];

interface DbHolder {
  ready?: Promise<Db>;
  close?: () => Promise<void>;
}

// One client per process: kept on globalThis so Next's hot reload and repeated imports reuse it
// (PGlite cannot open the same folder twice).
const holderKey = Symbol.for("kickdrift.db");
const globalStore = globalThis as unknown as Record<symbol, DbHolder | undefined>;
function holder(): DbHolder {
  return (globalStore[holderKey] ??= {});
}

export function dataDir(): string {
  // Chosen at run time; tell the bundler not to trace the whole project from this call.
  return path.resolve(/*turbopackIgnore: true*/ process.env.KICKDRIFT_DATA_DIR ?? "./data");
}

export function migrationsFolder(): string {
  return path.join(process.cwd(), "drizzle");
}

/** The key of the PostgreSQL advisory lock held while migrations run ("kickdrift" as a number). */
export const MIGRATION_LOCK_KEY = 0x6b69636b6472;

/**
 * Runs `work` while holding a session advisory lock on one connection of the pool, so processes
 * that start together (the app and several workers) migrate one after the other: the first applies
 * the pending migrations, the others then find nothing left to apply.
 */
export async function withMigrationLock<T>(
  pool: { connect(): Promise<{ query(text: string, values?: unknown[]): Promise<unknown>; release(error?: Error | boolean): void }> },
  work: () => Promise<T>,
): Promise<T> {
  const client = await pool.connect();
  let broken: Error | undefined;
  try {
    await client.query("select pg_advisory_lock($1)", [MIGRATION_LOCK_KEY]);
    try {
      return await work();
    } finally {
      await client.query("select pg_advisory_unlock($1)", [MIGRATION_LOCK_KEY]).catch((error: Error) => {
        // A connection whose unlock failed is dropped (closing it frees the lock) instead of going back to the pool.
        broken = error;
      });
    }
  } finally {
    client.release(broken ?? false);
  }
}

async function openDb(): Promise<Db> {
  const url = process.env.DATABASE_URL;
  if (url) {
    const [{ Pool }, { drizzle }, { migrate }] = await Promise.all([
      import("pg"),
      import("drizzle-orm/node-postgres"),
      import("drizzle-orm/node-postgres/migrator"),
    ]);
    const pool = new Pool({ connectionString: url });
    // An idle connection that breaks (the server restarts, a managed database fails over) is dropped
    // and replaced on the next query; unhandled, the pool's error event would end the process.
    pool.on("error", (error) => console.error(`[kickdrift] database connection lost: ${error.message}`));
    const db = drizzle(pool, { schema });
    try {
      await withMigrationLock(pool, () => migrate(db, { migrationsFolder: migrationsFolder() }));
    } catch (error) {
      await pool.end().catch(() => undefined);
      throw error;
    }
    holder().close = () => pool.end();
    return db as unknown as Db;
  }
  const [{ PGlite }, { drizzle }, { migrate }] = await Promise.all([
    import("@electric-sql/pglite"),
    import("drizzle-orm/pglite"),
    import("drizzle-orm/pglite/migrator"),
  ]);
  const folder = path.join(dataDir(), "pglite");
  mkdirSync(folder, { recursive: true });
  const client = new PGlite(folder);
  const db = drizzle(client, { schema });
  await migrate(db, { migrationsFolder: migrationsFolder() });
  holder().close = () => client.close();
  return db as unknown as Db;
}

/** The process's database, migrated on first use. */
export function getDb(): Promise<Db> {
  const h = holder();
  if (!h.ready) {
    h.ready = openDb().catch((error: unknown) => {
      // Let a later call retry instead of caching a failure forever.
      h.ready = undefined;
      throw error;
    });
  }
  return h.ready;
}

/** Installs an already-migrated database as the process's client (tests use an in-memory PGlite). */
export function setDb(db: Db, close?: () => Promise<void>): void {
  const h = holder();
  h.ready = Promise.resolve(db);
  h.close = close;
}

export async function closeDb(): Promise<void> {
  const h = holder();
  const close = h.close;
  h.ready = undefined;
  h.close = undefined;
  if (close) await close();
}

export { schema };
