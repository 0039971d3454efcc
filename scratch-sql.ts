import { sql } from "drizzle-orm";
import { closeTestDb, useFreshDb } from "./tests/helpers/db";
import { readFileSync } from "node:fs";
const cpuMain = () => { const f = readFileSync(`/proc/self/task/${process.pid}/stat`, "utf8").split(") ")[1].split(" "); return (Number(f[11]) + Number(f[12])) * 10; };
const db = await useFreshDb();
const claim = () => db.execute(sql`
      with claimed as (
        update sweep_chunks set status = 'running', lease_owner = ${"x"},
          lease_expires_at = now() + make_interval(secs => ${60}::double precision), attempts = attempts + 1
        where id in (
          select c.id from sweep_chunks c join sweeps s on s.id = c.sweep_id
          where c.status = 'queued' and s.status in ('queued', 'running')
          order by s.created_at, c.sweep_id, c.chunk_index
          limit ${4}::int for update of c skip locked)
        returning *
      ), started as (
        update sweeps set status = 'running', started_at = coalesce(started_at, now())
        where id in (select sweep_id from claimed) and status = 'queued'
        returning id
      )
      select id, sweep_id, chunk_index, first_cell, cell_count, attempts from claimed order by sweep_id, chunk_index`);
const simple = () => db.execute(sql`select status from sweeps where id = ${"abc"}`);
for (const [name, fn] of [["claim", claim], ["simple", simple], ["claim", claim], ["simple", simple]] as const) {
  const c0 = cpuMain(); const t0 = performance.now();
  for (let i = 0; i < 200; i++) await fn();
  console.log(name, "cpu ms/query", ((cpuMain() - c0) / 200).toFixed(2), "wall", ((performance.now() - t0) / 200).toFixed(2));
}
await closeTestDb();
