import { PGlite } from "@electric-sql/pglite";
import { drizzle } from "drizzle-orm/pglite";
import { migrate } from "drizzle-orm/pglite/migrator";
import { count } from "drizzle-orm";
import type { PgTable } from "drizzle-orm/pg-core";
import { closeDb, migrationsFolder, setDb, type Db } from "@/db/client";
import * as schema from "@/db/schema";

/** Fixed values so tests mint session cookies the route handlers accept, and links have a known base. */
export const TEST_AUTH_SECRET = "kickdrift-test-secret-not-for-production";
export const TEST_BASE_URL = "http://localhost:3000";

export function setTestEnv(): void {
  process.env.NEXTAUTH_SECRET = TEST_AUTH_SECRET;
  process.env.NEXTAUTH_URL = TEST_BASE_URL;
  delete process.env.SMTP_URL;
  delete process.env.DATABASE_URL;
}

/**
 * A fresh in-memory PGlite with every migration applied, installed as the process's database so
 * route handlers and lib/ functions use it. Call once per test file (in beforeAll).
 */
export async function useFreshDb(): Promise<Db> {
  setTestEnv();
  const client = new PGlite();
  const db = drizzle(client, { schema }) as unknown as Db;
  await migrate(db as never, { migrationsFolder: migrationsFolder() });
  setDb(db, () => client.close());
  return db;
}

export async function closeTestDb(): Promise<void> {
  await closeDb();
}

/** Row count of a table, for "nothing half-written" checks. */
export async function countRows(db: Db, table: PgTable): Promise<number> {
  const [row] = await db.select({ n: count() }).from(table);
  return Number(row.n);
}
