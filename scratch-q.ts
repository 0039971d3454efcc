import { eq } from "drizzle-orm";
import { sweeps } from "@/db/schema";
import { QueueRunner } from "@/lib/queue/runner";
import { submitSweep } from "@/lib/queue/submit";
import { createChunkPool } from "@/lib/sweeps/pool";
import { closeTestDb, useFreshDb } from "./tests/helpers/db";
import { makeSweepStudio } from "./tests/integration/sweeps/support";
import { Session } from "node:inspector/promises";
import { PGlite } from "@electric-sql/pglite";
const stats = new Map<string, { n: number; ms: number }>();
let recording = false;
for (const name of ["query", "exec"] as const) {
  const proto = Object.getPrototypeOf(PGlite.prototype) as any;
  const target = (PGlite.prototype as any)[name] ? PGlite.prototype : proto;
  const orig = (target as any)[name];
  (target as any)[name] = async function (this: any, ...args: any[]) {
    const t = performance.now();
    try { return await orig.apply(this, args); } finally {
      if (recording) { const key = String(args[0]).replace(/\s+/g, " ").slice(0, 90); const e = stats.get(key) ?? { n: 0, ms: 0 }; e.n++; e.ms += performance.now() - t; stats.set(key, e); }
    }
  };
}
const specInput = { name: "bench", scenario: { scene: { kind: "pair", massAKg: 0.38, massBKg: 0.38, radiusAM: 0.026, radiusBM: 0.026, speedAMPerS: 3, speedBMPerS: 0, offsetFraction: 0, gapM: 0.01 }, contact: { model: "linear", stiffness: 1e5, damping: { kind: "restitution", value: 0.7 } }, integrator: "symplectic-euler", dtS: 1e-3, substeps: 1, durationS: 4 },
    axes: [ { parameter: "contact.stiffness", spacing: "log", from: 1e3, to: 1e6, count: 64 }, { parameter: "scene.speedAMPerS", spacing: "log", from: 0.5, to: 20, count: 64 }, { parameter: "scene.offsetFraction", spacing: "linear", from: 0, to: 0.95, count: 16 } ] };
const db = await useFreshDb();
const pool = createChunkPool({ threads: 2, entry: "source" });
const runner = new QueueRunner({ db, pool });

await runner.start();
await new Promise((r) => setTimeout(r, 3000));
{ const w = await submitSweep(db, (await makeSweepStudio("W", 600 * 60_000)).studioId, { spec: specInput }); runner.poke();
  for (;;) { const [row] = await db.select({ status: sweeps.status }).from(sweeps).where(eq(sweeps.id, w.id)); if (row.status === "done") break; await new Promise((r) => setTimeout(r, 20)); } }
const { readFileSync, readdirSync } = await import("node:fs");
const cpu = () => Object.fromEntries(readdirSync("/proc/self/task").map((tid) => { const f = readFileSync(`/proc/self/task/${tid}/stat`, "utf8").split(") ")[1].split(" "); const comm = readFileSync(`/proc/self/task/${tid}/comm`, "utf8").trim(); return [`${tid}:${comm}`, (Number(f[11]) + Number(f[12])) * 10]; }));
const cpu0 = cpu();
recording = true; const { performance: np } = await import("node:perf_hooks"); const elu = np.eventLoopUtilization();
const studio = await makeSweepStudio("X", 600 * 60_000);
const t0 = performance.now();
const s = await submitSweep(db, studio.studioId, { spec: specInput });
runner.poke();
for (;;) { const [row] = await db.select({ status: sweeps.status }).from(sweeps).where(eq(sweeps.id, s.id)); if (row.status === "done") break; await new Promise((r) => setTimeout(r, 20)); }
console.log("total", performance.now() - t0);
const cpu1 = cpu(); for (const k of Object.keys(cpu1)) { const d = cpu1[k] - (cpu0[k] ?? 0); if (d > 0) console.log("cpu ms", k, d); }
recording = false; console.log("busy", np.eventLoopUtilization(elu).active);
[...stats].sort((a, b) => b[1].ms - a[1].ms).slice(0, 20).forEach(([k, v]) => console.log(v.n, v.ms.toFixed(0), k));
await runner.stop(); await pool.close(); await closeTestDb();
