/**
 * The demo's long sweep makes way for a visitor's own work. The queue serves a studio's chunks
 * first come, first served, so the demo sweep left running at start-up (lib/demo/results.ts, large
 * enough to run for minutes) would otherwise hold the studio's share of the workers until it
 * finished, and a visitor's first sweep would wait behind it. While any other sweep or check on the
 * server is queued or running (the demo studio's or a studio a visitor made), the long sweep is
 * paused at a chunk boundary (chunks already running land and are kept, as with any pause) under a
 * reason of its own, which the run limits (lib/quotas/enforce.ts) neither set nor lift; once
 * nothing else waits it resumes.
 * Demo only: db/startup.ts starts it with KICKDRIFT_DEMO=1.
 */
import { and, eq, inArray, sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { sweeps } from "@/db/schema";

/** What the paused demo sweep says on the studio home and its own page. */
export const DEMO_YIELD_REASON = "making way for your own sweeps; it carries on when they finish";

export type PaceStep = "paused" | "resumed" | "unchanged" | "finished";

/**
 * One look at the demo sweep: pauses it while other work is queued or running, resumes it once
 * there is none. Each change is one conditional statement, so a look that races a submit or
 * the runner changes nothing twice. "finished" when the sweep is done, failed, cancelled or gone.
 */
export async function paceDemoSweep(db: Db, sweepId: string): Promise<PaceStep> {
  const [row] = await db.select({ status: sweeps.status }).from(sweeps).where(eq(sweeps.id, sweepId));
  if (!row || row.status === "done" || row.status === "failed" || row.status === "cancelled") return "finished";
  // Any studio's: a visitor who signed up a studio of their own gets the workers too.
  const othersBusy = sql`exists (select 1 from sweeps o where o.id <> sweeps.id and o.status in ('queued', 'running'))`;
  const paused = await db
    .update(sweeps)
    .set({ status: "paused", reason: DEMO_YIELD_REASON })
    .where(and(eq(sweeps.id, sweepId), inArray(sweeps.status, ["queued", "running"]), othersBusy))
    .returning({ id: sweeps.id });
  if (paused.length) return "paused";
  const resumed = await db
    .update(sweeps)
    .set({ status: sql`case when ${sweeps.startedAt} is null then 'queued' else 'running' end`, reason: null })
    .where(and(eq(sweeps.id, sweepId), eq(sweeps.status, "paused"), eq(sweeps.reason, DEMO_YIELD_REASON), sql`not ${othersBusy}`))
    .returning({ id: sweeps.id });
  return resumed.length ? "resumed" : "unchanged";
}

const pacerKey = Symbol.for("kickdrift.demoPacer");
type Holder = { [pacerKey]?: ReturnType<typeof setInterval> };

/** How often the pacer looks (ms): a visitor's sweep waits at most this plus the chunks in flight. */
export const PACE_EVERY_MS = 500;

/** Starts the pacer for the demo studio's long sweep (once per process); it stops when the sweep has finished or a look fails. */
export function startDemoPacer(db: Db, sweepId: string): void {
  const holder = globalThis as Holder;
  if (holder[pacerKey]) return;
  let busy = false;
  const timer = setInterval(() => {
    if (busy) return;
    busy = true;
    paceDemoSweep(db, sweepId)
      .then((step) => {
        if (step === "finished") {
          clearInterval(timer);
          holder[pacerKey] = undefined;
        }
      })
      .catch((error: unknown) => {
        // A failed look (the database closed, say) stops it: a demo nicety is not worth a log line every 500 ms. The next start-up starts it again.
        console.error(`[kickdrift] demo pacer stopped: ${(error as Error).message}`);
        clearInterval(timer);
        if (holder[pacerKey] === timer) holder[pacerKey] = undefined;
      })
      .finally(() => {
        busy = false;
      });
  }, PACE_EVERY_MS);
  timer.unref();
  holder[pacerKey] = timer;
}

/** Stops the pacer (tests). */
export function stopDemoPacer(): void {
  const holder = globalThis as Holder;
  if (holder[pacerKey]) clearInterval(holder[pacerKey]);
  holder[pacerKey] = undefined;
}
