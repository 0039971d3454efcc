/**
 * Quotas at submit (422 / 402 / 409 naming the limit, its value, what was asked and what remains;
 * nothing queued), under concurrency (two submits at once cannot together pass the cap), in the
 * quote, and while sweeps run on a real worker pool: pause at a chunk boundary with the reason and
 * resume on its own, the running-sweeps limit queues, fair share interleaves studios, and the
 * 80 % / 100 % alerts are queued once per threshold per month however often they are checked.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, asc, eq, inArray, like, sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { ledgerEntries, outbox, studioQuotas, sweepChunks, sweeps } from "@/db/schema";
import { ensureAuditAppendOnly } from "@/lib/audit/audit";
import { QueueRunner } from "@/lib/queue/runner";
import { quoteSweep, submitSweep } from "@/lib/queue/submit";
import { setStudioStatus, updateQuotas } from "@/lib/quotas/admin";
import { applyRunLimits, capAlertKey, RUN_LIMIT_REASONS, sendCapAlerts, waitingForSlotReason } from "@/lib/quotas/enforce";
import { monthOf, PLAN_DEFAULTS } from "@/lib/quotas/plan";
import { createChunkPool, type ChunkPool } from "@/lib/sweeps/pool";
import { closeTestDb, useFreshDb } from "../helpers/db";
import { makeUser } from "../helpers/factories";
import { call, errorOf } from "../helpers/http";
import { loadRoute } from "../helpers/routes";
import { ballPitSpec, gatedPool, grant, makeSweepStudio, puckSpec, sweepRow, waitForCondition, waitForSweep } from "./sweeps/support";

let db: Db;
let pool: ChunkPool;
let admin: { id: string; email: string };

beforeAll(async () => {
  db = await useFreshDb();
  await ensureAuditAppendOnly(db);
  admin = await makeUser({ name: "operator", isAdmin: true });
  pool = createChunkPool({ threads: 1, entry: "source" });
});
afterAll(async () => {
  await pool?.close();
  await closeTestDb();
});

const newRunner = (concurrency?: number) => new QueueRunner({ db, pool, pollMs: 20, leaseMs: 30_000, concurrency });

/**
 * A runner that reports each claim it makes: `claimsAfter()` counts the claims since a mark and the
 * chunks of a given sweep they returned, so a test can see the runner look at the queue several
 * times without handing out a paused sweep's chunks (order of events, not a fixed wait).
 */
function watchedRunner(options: { pool: typeof pool; concurrency?: number }) {
  const claims: string[][] = [];
  const runner = new QueueRunner({ db, pool: options.pool, pollMs: 20, leaseMs: 30_000, concurrency: options.concurrency, onClaimed: (ids) => void claims.push(ids) });
  return {
    runner,
    mark: () => claims.length,
    claimsSince: (mark: number) => claims.slice(mark),
  };
}

/** After `mark`, waits for three more claims with the runner holding no chunk, and returns the chunks those claims handed out for the sweep. */
async function claimedWhileIdle(watch: ReturnType<typeof watchedRunner>, mark: number, sweepId: string): Promise<number> {
  await waitForCondition("the runner to drain and look at the queue three more times", () => watch.runner.chunksHeld === 0 && watch.claimsSince(mark).length >= 3);
  return watch.claimsSince(mark).flat().filter((id) => id === sweepId).length;
}

async function sweepCount(studioId: string): Promise<number> {
  return (await db.select().from(sweeps).where(eq(sweeps.studioId, studioId))).length;
}

async function submitThroughApi(studio: { studioId: string; cookies: { engineer: string } }, spec: unknown) {
  const mod = await loadRoute("v1/studios/[studioId]/sweeps");
  return call(mod.POST, {
    method: "POST",
    path: `/api/v1/studios/${studio.studioId}/sweeps`,
    params: { studioId: studio.studioId },
    body: { spec },
    cookie: studio.cookies.engineer,
  });
}

type LimitBody = { error: { code: string; message: string; field?: string; limit: { name: string; value: number; requested: number; remaining: number; unit: string } } };

describe("submit enforcement", () => {
  it("refuses a sweep over a per-sweep limit with 422 naming the limit, its value, the request and what remains; nothing is queued", async () => {
    const studio = await makeSweepStudio("Marram Kite Games");
    // puckSpec: 5 stiffnesses × 3 timesteps = 15 cells.
    await updateQuotas(db, admin, studio.studioId, { maxCellsPerSweep: 10, reason: "trial plan" });
    const cells = await submitThroughApi(studio, puckSpec());
    expect(cells.status).toBe(422);
    const body = cells.body as LimitBody;
    expect(body.error.code).toBe("quota_exceeded");
    expect(body.error.limit).toEqual({ name: "maxCellsPerSweep", value: 10, requested: 15, remaining: 10, unit: "cells" });
    expect(body.error.message).toContain("maxCellsPerSweep");

    // Steps: the puck spec's finest cell is 0.1 s at dt 1/960 s with 4 substeps = 384 steps.
    await updateQuotas(db, admin, studio.studioId, { maxCellsPerSweep: null, maxStepsPerCell: 300, reason: "trial plan" });
    const steps = (await submitThroughApi(studio, puckSpec())).body as LimitBody;
    expect(steps.error.limit).toMatchObject({ name: "maxStepsPerCell", value: 300, requested: 384 });

    // Bodies: the ball pit sweeps scene.count 10, 20, 30.
    await updateQuotas(db, admin, studio.studioId, { maxStepsPerCell: null, maxBodies: 20, reason: "trial plan" });
    const bodies = (await submitThroughApi(studio, ballPitSpec(0.05))).body as LimitBody;
    expect(bodies.error.limit).toMatchObject({ name: "maxBodies", value: 20, requested: 30 });
    expect(await sweepCount(studio.studioId)).toBe(0);
  });

  it("refuses a sweep past the monthly cap (422) or the balance (402) with what remains, and the quote shows the same", async () => {
    const studio = await makeSweepStudio("Sorrel Anvil Games", 10 * 60_000);
    const quote = await quoteSweep(db, studio.studioId, puckSpec());
    expect(quote.limits.violations).toEqual([]);
    expect(quote.limits.monthlyComputeMs).toBe(PLAN_DEFAULTS.monthlyComputeMs);
    // The quote's ceiling is what a sweep reserves against the cap and the balance.
    const cap = quote.ceilingMs - 1;
    await updateQuotas(db, admin, studio.studioId, { monthlyComputeMs: cap, reason: "test" });
    const refused = await submitThroughApi(studio, puckSpec());
    expect(refused.status).toBe(422);
    expect((refused.body as LimitBody).error.limit).toEqual({ name: "monthlyComputeMs", value: cap, requested: quote.ceilingMs, remaining: cap, unit: "ms" });
    const capped = await quoteSweep(db, studio.studioId, puckSpec());
    expect(capped.limits.monthRemainingMs).toBe(cap);
    expect(capped.limits.violations.map((v) => v.name)).toEqual(["monthlyComputeMs"]);

    await updateQuotas(db, admin, studio.studioId, { monthlyComputeMs: null, reason: "test" });
    await grant(studio.studioId, -10 * 60_000 + quote.ceilingMs - 1, `spend:${studio.studioId}`);
    const poor = await submitThroughApi(studio, puckSpec());
    expect(poor.status).toBe(402);
    expect((poor.body as LimitBody).error).toMatchObject({ code: "insufficient_minutes", limit: { name: "balance", requested: quote.ceilingMs, remaining: quote.ceilingMs - 1 } });
    expect(await sweepCount(studio.studioId)).toBe(0);
  });

  it("two sweeps submitted at once cannot together pass the monthly cap or the balance", async () => {
    const studio = await makeSweepStudio("Thimble Reef Games");
    // A sweep reserves its quote's ceiling: room for one sweep, not two.
    const { ceilingMs: estimatedComputeMs } = await quoteSweep(db, studio.studioId, puckSpec());
    await updateQuotas(db, admin, studio.studioId, { monthlyComputeMs: Math.floor(estimatedComputeMs * 1.5), reason: "test" });
    const results = await Promise.allSettled([submitSweep(db, studio.studioId, { spec: puckSpec() }), submitSweep(db, studio.studioId, { spec: puckSpec() })]);
    expect(results.filter((r) => r.status === "fulfilled")).toHaveLength(1);
    const rejected = results.find((r) => r.status === "rejected") as PromiseRejectedResult;
    expect(rejected.reason).toMatchObject({ status: 422, code: "quota_exceeded", limit: { name: "monthlyComputeMs", remaining: Math.floor(estimatedComputeMs * 1.5) - estimatedComputeMs } });
    expect(await sweepCount(studio.studioId)).toBe(1);

    const poor = await makeSweepStudio("Thimble Reef Annex", Math.floor(estimatedComputeMs * 1.5));
    const again = await Promise.allSettled([submitSweep(db, poor.studioId, { spec: puckSpec() }), submitSweep(db, poor.studioId, { spec: puckSpec() })]);
    expect(again.filter((r) => r.status === "fulfilled")).toHaveLength(1);
    expect((again.find((r) => r.status === "rejected") as PromiseRejectedResult).reason).toMatchObject({ status: 402, code: "insufficient_minutes" });
    // Out of the way of the runner tests below.
    await db.update(sweeps).set({ status: "cancelled" }).where(inArray(sweeps.studioId, [studio.studioId, poor.studioId]));
  });

  it("a suspended studio's submits are refused with 409 studio_suspended; quotes and reads still answer", async () => {
    const studio = await makeSweepStudio("Wicker Tern Works");
    await setStudioStatus(db, admin, studio.studioId, { status: "suspended", reason: "unpaid invoice" });
    const refused = await submitThroughApi(studio, puckSpec());
    expect(refused.status).toBe(409);
    expect(errorOf(refused.body).code).toBe("studio_suspended");
    expect(errorOf(refused.body).message).toMatch(/suspended/);
    const quote = await quoteSweep(db, studio.studioId, puckSpec());
    expect(quote.limits.studioStatus).toBe("suspended");
    expect(quote.limits.violations[0].code).toBe("studio_suspended");
    const list = await call((await loadRoute("v1/studios/[studioId]/sweeps")).GET, {
      path: `/api/v1/studios/${studio.studioId}/sweeps`,
      params: { studioId: studio.studioId },
      cookie: studio.cookies.engineer,
    });
    expect(list.status).toBe(200);
  });
});

describe("run-time limits", { timeout: 180_000 }, () => {
  it("pauses at a chunk boundary when the monthly cap is reached, alerts 80 % and 100 % once, resumes after a raise, keeps every finished chunk", async () => {
    const studio = await makeSweepStudio("Brambleway Games");
    const sweep = await submitSweep(db, studio.studioId, { spec: ballPitSpec(0.2) }, { chunkOptions: { maxCellsPerChunk: 1 } });
    // The cap is reached once the chunks' work units add up to 1 billed ms (a few chunks of this sweep).
    await updateQuotas(db, admin, studio.studioId, { monthlyComputeMs: 1, reason: "test: lower below the sweep's need" });
    const watch = watchedRunner({ pool });
    const runner = watch.runner;
    await runner.start();
    try {
      const paused = await waitForSweep(sweep.id, (s) => s.status === "paused" && s.chunksDone > 0);
      expect(paused.reason).toBe(RUN_LIMIT_REASONS.monthlyCap);
      // Let anything in flight land; the claims after it hand out nothing of the paused sweep.
      await waitForCondition("chunks in flight to land", () => runner.chunksHeld === 0);
      const mark = watch.mark();
      expect(await claimedWhileIdle(watch, mark, sweep.id)).toBe(0);
      const settled = await sweepRow(sweep.id);
      expect(settled.status).toBe("paused");
      expect(settled.chunksDone).toBeLessThan(settled.chunks);
      const running = await db.select().from(sweepChunks).where(and(eq(sweepChunks.sweepId, sweep.id), eq(sweepChunks.status, "running")));
      expect(running).toEqual([]);
      const month = monthOf(new Date()).key;
      for (const t of [80, 100]) expect(await db.select().from(outbox).where(eq(outbox.idempotencyKey, capAlertKey(t, studio.studioId, month)))).toHaveLength(1);

      await updateQuotas(db, admin, studio.studioId, { monthlyComputeMs: null, reason: "test: raise" });
      const done = await waitForSweep(sweep.id, (s) => s.status === "done");
      expect(done.reason).toBeNull();
      expect(done.cellsDone).toBe(done.cells);
      // Checked again and again while it ran: still one alert per threshold.
      await sendCapAlerts(db, studio.studioId);
      const alerts = await db.select().from(outbox).where(like(outbox.idempotencyKey, `mail:quota-alert:%:${studio.studioId}:%`));
      expect(alerts).toHaveLength(2);
      const to = (alerts[0].payload as { to: string }).to;
      expect(to).toContain(studio.owner.email);
      expect(to).toContain(studio.finance.email);
      expect(to).not.toContain(studio.engineer.email);
    } finally {
      await runner.stop();
    }
  });

  it("suspension pauses running sweeps with the reason; lifting it resumes them", async () => {
    const studio = await makeSweepStudio("Cobble Heron Games");
    const sweep = await submitSweep(db, studio.studioId, { spec: ballPitSpec(0.2) }, { chunkOptions: { maxCellsPerChunk: 1 } });
    // One chunk held at a time, and chunks start only through the gate: the suspension lands while
    // the sweep is known to be part-way (one chunk recorded, the next claimed and held), however
    // fast or loaded the machine is.
    const gate = gatedPool(pool);
    const watch = watchedRunner({ pool: gate, concurrency: 1 });
    const runner = watch.runner;
    await runner.start();
    try {
      gate.allow(1);
      await waitForSweep(sweep.id, (s) => s.chunksDone >= 1);
      await waitForCondition("the next chunk to be claimed and held at the gate", () => gate.waiting === 1);
      await setStudioStatus(db, admin, studio.studioId, { status: "suspended", reason: "abuse report" });
      const paused = await sweepRow(sweep.id);
      expect(paused).toMatchObject({ status: "paused", reason: RUN_LIMIT_REASONS.suspended });
      // The chunk claimed before the suspension may still run (pausing is at chunk boundaries);
      // after it, the runner looks at the queue again and again and hands out nothing of the sweep.
      const mark = watch.mark();
      gate.open();
      expect(await claimedWhileIdle(watch, mark, sweep.id)).toBe(0);
      const still = await sweepRow(sweep.id);
      expect(still.status).toBe("paused");
      expect(still.chunksDone).toBe(2);
      expect(still.chunksDone).toBeLessThan(still.chunks);
      await setStudioStatus(db, admin, studio.studioId, { status: "active", reason: "resolved" });
      const done = await waitForSweep(sweep.id, (s) => s.status === "done");
      expect(done.cellsDone).toBe(done.cells);
    } finally {
      await runner.stop();
    }
  });

  it("the running-sweeps limit queues extra sweeps (with a reason) instead of refusing them", async () => {
    const studio = await makeSweepStudio("Lantern Moth Studio");
    await updateQuotas(db, admin, studio.studioId, { maxRunningSweeps: 1, reason: "test" });
    const first = await submitSweep(db, studio.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 3 } });
    const second = await submitSweep(db, studio.studioId, { spec: { ...puckSpec(), name: "second", axes: [{ parameter: "contact.stiffness", spacing: "log", from: 2e3, to: 2e6, count: 6 }] } }, { chunkOptions: { maxCellsPerChunk: 3 } });
    // Without a runner claiming, the limits alone mark the waiting sweep once the first one runs.
    await db.update(sweeps).set({ status: "running", startedAt: new Date() }).where(eq(sweeps.id, first.id));
    await applyRunLimits(db);
    expect((await sweepRow(second.id)).reason).toBe(waitingForSlotReason(1));
    await db.update(sweeps).set({ status: "queued", startedAt: null }).where(eq(sweeps.id, first.id));
    const runner = newRunner();
    await runner.start();
    try {
      const a = await waitForSweep(first.id, (s) => s.status === "done");
      const b = await waitForSweep(second.id, (s) => s.status === "done");
      expect(b.startedAt!.getTime()).toBeGreaterThanOrEqual(a.finishedAt!.getTime());
      expect(b.reason).toBeNull();
    } finally {
      await runner.stop();
    }
  });

  it("fair share: a small sweep of a second studio is interleaved with a large sweep queued before it", async () => {
    const big = await makeSweepStudio("Gravel Otter Games");
    const small = await makeSweepStudio("Pine Vole Arcade");
    const large = await submitSweep(db, big.studioId, { spec: puckSpec() }, { chunkOptions: { maxCellsPerChunk: 1 } }); // 15 chunks
    const later = await submitSweep(db, small.studioId, { spec: { ...puckSpec(), name: "small" } }, { chunkOptions: { maxCellsPerChunk: 5 } }); // 3 chunks
    // One thread and one chunk held at a time, so the order chunks land in is the order they were claimed.
    const runner = new QueueRunner({ db, pool, pollMs: 20, leaseMs: 30_000, concurrency: 1 });
    await runner.start();
    try {
      await waitForSweep(later.id, (s) => s.status === "done");
      await waitForSweep(large.id, (s) => s.status === "done");
      // The order chunks landed in, from their usage entries (serial ids).
      const landed = (await db.select().from(ledgerEntries).where(inArray(ledgerEntries.sweepId, [large.id, later.id])).orderBy(asc(ledgerEntries.id))).map((e) =>
        e.sweepId === large.id ? "L" : "s",
      );
      // Alternating studios while both wait: the large sweep's chunks before the small one's last
      // are at most one more than the small one's 3 (creation order alone would put all 15 first).
      const lastSmall = landed.lastIndexOf("s");
      expect(landed.slice(0, lastSmall).filter((x) => x === "L").length, landed.join("")).toBeLessThanOrEqual(3);
      expect(landed.filter((x) => x === "s")).toHaveLength(3);
    } finally {
      await runner.stop();
    }
  });
});

describe("alerts", () => {
  it("queues each threshold once per month, even when checked concurrently and repeatedly", async () => {
    const studio = await makeSweepStudio("Fennel Dock Games");
    await db.insert(studioQuotas).values({ studioId: studio.studioId, monthlyComputeMs: 1_000 });
    // 850 ms used of 1,000: past 80 %, not 100 %.
    await db.execute(
      sql`insert into ledger_entries (studio_id, kind, compute_ms, idempotency_key) values (${studio.studioId}, 'usage', -850, ${`usage:test:${studio.studioId}`})`,
    );
    const counts = await Promise.all([sendCapAlerts(db, studio.studioId), sendCapAlerts(db, studio.studioId), sendCapAlerts(db, studio.studioId)]);
    expect(counts.reduce((a, b) => a + b, 0)).toBe(1);
    await sendCapAlerts(db, studio.studioId);
    const month = monthOf(new Date()).key;
    expect(await db.select().from(outbox).where(eq(outbox.idempotencyKey, capAlertKey(80, studio.studioId, month)))).toHaveLength(1);
    expect(await db.select().from(outbox).where(eq(outbox.idempotencyKey, capAlertKey(100, studio.studioId, month)))).toHaveLength(0);
    const [row] = await db.select().from(outbox).where(eq(outbox.idempotencyKey, capAlertKey(80, studio.studioId, month)));
    expect((row.payload as { subject: string }).subject).toBe("Fennel Dock Games has used 80% of its monthly compute cap");
    // Lowering the cap below usage crosses 100 %: that alert goes out once too.
    await updateQuotas(db, admin, studio.studioId, { monthlyComputeMs: 800, reason: "test" });
    expect(await sendCapAlerts(db, studio.studioId)).toBe(1);
    expect(await sendCapAlerts(db, studio.studioId)).toBe(0);
  });
});
