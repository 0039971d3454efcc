import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { PGlite } from "@electric-sql/pglite";
import { drizzle } from "drizzle-orm/pglite";
import { migrate } from "drizzle-orm/pglite/migrator";
import { count } from "drizzle-orm";
import type { PgTable } from "drizzle-orm/pg-core";
import { closeDb, getDb, migrationsFolder, setDb, type Db } from "@/db/client";
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

let createdPgDatabase: { adminUrl: string; name: string } | undefined;
let createdResultsDir: string | undefined;

/** A fresh folder for the file result store (packed chunk results) of this test file's database. */
function makeFreshResultsDir(): void {
  createdResultsDir = mkdtempSync(path.join(tmpdir(), "kd-results-"));
  process.env.KICKDRIFT_RESULTS_DIR = createdResultsDir;
}

/**
 * With KICKDRIFT_TEST_DATABASE_URL (a PostgreSQL server URL), each test file gets its own new
 * database on that server, opened through the app's own node-postgres path (DATABASE_URL + getDb,
 * migrations included), so the same tests check both drivers.
 */
async function openFreshPostgres(adminUrl: string): Promise<Db> {
  const { Client } = await import("pg");
  const name = `kd_test_${process.pid}_${Date.now().toString(36)}`;
  const admin = new Client({ connectionString: adminUrl });
  await admin.connect();
  await admin.query(`create database ${name}`);
  await admin.end();
  createdPgDatabase = { adminUrl, name };
  const url = new URL(adminUrl);
  url.pathname = `/${name}`;
  process.env.DATABASE_URL = url.toString();
  await closeDb();
  return getDb();
}

/**
 * A fresh in-memory PGlite with every migration applied, installed as the process's database so
 * route handlers and lib/ functions use it. Call once per test file (in beforeAll).
 */
export async function useFreshDb(): Promise<Db> {
  setTestEnv();
  makeFreshResultsDir();
  const pgUrl = process.env.KICKDRIFT_TEST_DATABASE_URL;
  if (pgUrl) return openFreshPostgres(pgUrl);
  const client = new PGlite();
  const db = drizzle(client, { schema }) as unknown as Db;
  await migrate(db as never, { migrationsFolder: migrationsFolder() });
  setDb(db, () => client.close());
  return db;
}

export async function closeTestDb(): Promise<void> {
  await closeDb();
  if (createdResultsDir) {
    rmSync(createdResultsDir, { recursive: true, force: true });
    createdResultsDir = undefined;
  }
  if (createdPgDatabase) {
    const { Client } = await import("pg");
    const admin = new Client({ connectionString: createdPgDatabase.adminUrl });
    await admin.connect();
    await admin.query(`drop database if exists ${createdPgDatabase.name} with (force)`);
    await admin.end();
    createdPgDatabase = undefined;
  }
}

/** Row count of a table, for "nothing half-written" checks. */
export async function countRows(db: Db, table: PgTable): Promise<number> {
  const [row] = await db.select({ n: count() }).from(table);
  return Number(row.n);
}
