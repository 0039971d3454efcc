/**
 * Migrations when several processes start together on one PostgreSQL: db/client.ts runs them under
 * a PostgreSQL advisory lock, so one process applies them and the others find nothing left to do.
 */
import { readFileSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { drizzle } from "drizzle-orm/node-postgres";
import { migrate } from "drizzle-orm/node-postgres/migrator";
import type { Pool } from "pg";
import { MIGRATION_LOCK_KEY, migrationsFolder, withMigrationLock } from "@/db/client";
import { createTestDatabase, PG_URL, reportSkipWithoutPostgres, type TestDatabase } from "./support";

reportSkipWithoutPostgres("migrations under an advisory lock");

const STARTING_TOGETHER = 6;

describe.skipIf(!PG_URL)("migrations from processes starting together", { timeout: 60_000 }, () => {
  let database: TestDatabase;
  let pools: Pool[] = [];

  beforeAll(async () => {
    database = await createTestDatabase("migrate");
    const { Pool: PgPool } = await import("pg");
    pools = Array.from({ length: STARTING_TOGETHER + 1 }, () => new PgPool({ connectionString: database.url }));
    // The database is dropped (its connections ended) after the test; a connection ending then is expected.
    for (const pool of pools) pool.on("error", () => undefined);
  });
  afterAll(async () => {
    await Promise.all(pools.map((pool) => pool.end()));
    await database?.drop();
  });

  it("wait for the lock, then apply each migration exactly once; every starter succeeds", async () => {
    const [holder, ...starters] = pools;
    // Someone (say, a deploy) holds the lock: the starters must wait rather than migrate beside it.
    const held = await holder.connect();
    await held.query("select pg_advisory_lock($1)", [MIGRATION_LOCK_KEY]);
    let finished = 0;
    const runs = starters.map((pool) =>
      withMigrationLock(pool, () => migrate(drizzle(pool), { migrationsFolder: migrationsFolder() })).then(() => (finished += 1)),
    );
    // Every starter is seen queued behind the lock (PostgreSQL's own view of waiting lock requests),
    // not assumed to be after a fixed wait.
    const deadline = Date.now() + 30_000;
    for (;;) {
      const waiting = await held.query("select count(*)::int as n from pg_locks where locktype = 'advisory' and not granted");
      if (waiting.rows[0].n >= starters.length) break;
      if (Date.now() > deadline) throw new Error(`only ${waiting.rows[0].n} of ${starters.length} starters wait for the migration lock`);
      await new Promise((resolve) => setTimeout(resolve, 20));
    }
    expect(finished).toBe(0);
    const before = await holder.query("select to_regclass('drizzle.__drizzle_migrations') as t");
    expect(before.rows[0].t).toBeNull();
    await held.query("select pg_advisory_unlock($1)", [MIGRATION_LOCK_KEY]);
    held.release();

    await Promise.all(runs);
    expect(finished).toBe(STARTING_TOGETHER);
    const journal = JSON.parse(readFileSync(path.join(migrationsFolder(), "meta", "_journal.json"), "utf8")) as { entries: { tag: string }[] };
    const applied = await holder.query("select hash, count(*)::int as n from drizzle.__drizzle_migrations group by hash");
    expect(applied.rows.length).toBe(journal.entries.length);
    expect(applied.rows.every((row: { n: number }) => row.n === 1)).toBe(true);
    // The schema is there, and the lock is free again (no starter kept it).
    await holder.query("select count(*) from sweep_chunks");
    const probe = await holder.connect();
    const free = await probe.query("select pg_try_advisory_lock($1) as ok", [MIGRATION_LOCK_KEY]);
    expect(free.rows[0].ok).toBe(true);
    await probe.query("select pg_advisory_unlock($1)", [MIGRATION_LOCK_KEY]);
    probe.release();
  });
});
