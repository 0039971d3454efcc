/**
 * The demo's watch sweep (lib/demo/watch.ts): the demo engineer's first sign-in starts it through
 * the ordinary queue, once; it makes way for the seeded work, then runs in paced steps that the
 * studio home shows (paused between steps with the pacing reason, cells done growing) and finishes;
 * its cells equal a fresh run of its spec byte for byte, its bill is in the ledger once per chunk and
 * within the compute the demo states, and the pacing pauses are no sweep.paused webhook events.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq, inArray } from "drizzle-orm";
import type { JWT } from "next-auth/jwt";
import type { Db } from "@/db/client";
import { ledgerEntries, sweeps, users, webhookEvents, type Sweep } from "@/db/schema";
import { DEMO_ACCOUNTS, seedDemo, startDemoWatch } from "@/server/seed";
import { authOptions } from "@/lib/auth/options";
import { WATCH_PACING_REASON, WATCH_SWEEP_NAME, WATCH_SWEEP_STATED, findWatchSweep, type WatchPacer } from "@/lib/demo/watch";
import { storedCells } from "@/lib/queue/views";
import { studioOverview } from "@/lib/studios/overview";
import { createChunkPool } from "@/lib/sweeps/pool";
import { resultsHeader, runSweep } from "@/lib/sweeps/run";
import { resultsToCsv, type CellResult } from "@/lib/sweeps/results";
import type { SweepSpec } from "@/lib/sweeps/spec";
import { createEndpoint, scanWebhookEvents } from "@/lib/webhooks/webhooks";
import { startSweepRunner, stopSweepRunner, waitForSweep } from "../sweeps/support";

/** The pacer spreads the sweep over this long here (the demo server: a minute). */
const DURATION_MS = 8_000;

let db: Db;
let studioId: string;
let seeded: Sweep[];
let watch: { pacer: WatchPacer; removeHook: () => void };
const steps: { chunksTaken: number; at: number }[] = [];

async function userId(role: "owner" | "engineer"): Promise<string> {
  const email = DEMO_ACCOUNTS.find((a) => a.role === role)!.email;
  const [row] = await db.select({ id: users.id }).from(users).where(eq(users.email, email));
  return row.id;
}

/** A sign-in as next-auth makes it: the jwt callback with the signed-in user (it runs the sign-in hooks). */
async function signIn(id: string): Promise<void> {
  const jwt = authOptions.callbacks!.jwt!;
  await jwt({ token: {} as JWT, user: { id, email: null, name: null }, account: null, trigger: "signIn" } as Parameters<typeof jwt>[0]);
}

beforeAll(async () => {
  ({ db } = await startSweepRunner());
  ({ studioId } = await seedDemo(db));
  seeded = await db.select().from(sweeps).where(eq(sweeps.studioId, studioId));
  watch = (await startDemoWatch(db, { durationMs: DURATION_MS, onStep: (step) => steps.push({ chunksTaken: step.chunksTaken, at: Date.now() }) }))!;
  expect(watch).not.toBeNull();
}, 120_000);

afterAll(async () => {
  watch?.removeHook();
  watch?.pacer.stop();
  await stopSweepRunner();
});

describe("the demo's watch sweep", () => {
  it("is started by the demo engineer's first sign-in, once, and not by anyone else's", async () => {
    await signIn(await userId("owner"));
    expect(await findWatchSweep(db, studioId)).toBeNull();
    const engineerId = await userId("engineer");
    await signIn(engineerId);
    const sweep = await findWatchSweep(db, studioId);
    expect(sweep?.createdByUserId).toBe(engineerId);
    expect(sweep?.cells).toBe(WATCH_SWEEP_STATED.cells);
    expect(sweep?.chunks).toBe(WATCH_SWEEP_STATED.chunks);
    await signIn(engineerId);
    const named = await db.select({ id: sweeps.id }).from(sweeps).where(and(eq(sweeps.studioId, studioId), eq(sweeps.name, WATCH_SWEEP_NAME)));
    expect(named).toHaveLength(1);
  });

  it("makes way for the seeded work, then runs in paced steps shown on the studio home, and finishes", async () => {
    const watched = (await findWatchSweep(db, studioId))!;
    const engineer = { id: await userId("engineer") };
    await createEndpoint(db, studioId, engineer, { url: "https://hooks.gannetyard.test/kickdrift", events: ["sweep.paused"] });
    let seenMidway = false;
    let seenPacingReason = false;
    const deadline = Date.now() + 300_000;
    let done: Sweep | null = null;
    while (!done) {
      const overview = await studioOverview(db, studioId, "engineer");
      const item = overview.running.find((sweep) => sweep.id === watched.id);
      if (item && item.cellsDone > 0 && item.cellsDone < item.cells) seenMidway = true;
      if (item?.status === "paused" && item.reason === WATCH_PACING_REASON) {
        seenPacingReason = true;
        // A pause between steps is not a pause by a run limit: no sweep.paused event for it.
        await scanWebhookEvents(db);
      }
      const [row] = await db.select().from(sweeps).where(eq(sweeps.id, watched.id));
      if (row.status === "done") done = row;
      else if (Date.now() > deadline) throw new Error(`watch sweep still ${row.status} (${row.chunksDone}/${row.chunks} chunks)`);
      else await new Promise((resolve) => setTimeout(resolve, 100));
    }
    const doneAt = Date.now();
    expect(seenMidway, "the home showed it part done").toBe(true);
    expect(seenPacingReason, "the home showed the pacing reason between steps").toBe(true);
    expect(done.reason).toBeNull();
    expect(done.cellsDone).toBe(done.cells);
    const paused = await db.select().from(webhookEvents).where(eq(webhookEvents.type, "sweep.paused"));
    expect(paused).toEqual([]);

    // Paced: many steps, each a claim of a few chunks, spread over at least half the duration
    // (a lower bound: a loaded machine only makes it longer).
    expect(steps.length).toBeGreaterThanOrEqual(4);
    expect(Math.max(...steps.map((s) => s.chunksTaken))).toBeLessThan(WATCH_SWEEP_STATED.chunks);
    expect(doneAt - steps[0].at).toBeGreaterThanOrEqual(DURATION_MS / 2);
    await watch.pacer.done; // stops by itself once the sweep is done

    // Made way: every chunk of it landed after the seeded sweeps and the check had finished.
    const seededDone = await Promise.all(seeded.map((sweep) => waitForSweep(sweep.id, (row) => row.status === "done", 10_000)));
    const lastSeeded = Math.max(...seededDone.map((sweep) => sweep.finishedAt!.getTime()));
    const debits = await db.select().from(ledgerEntries).where(and(eq(ledgerEntries.sweepId, watched.id), inArray(ledgerEntries.kind, ["usage"])));
    expect(debits).toHaveLength(WATCH_SWEEP_STATED.chunks);
    expect(Math.min(...debits.map((entry) => entry.createdAt.getTime()))).toBeGreaterThanOrEqual(lastSeeded);

    // Billed once per chunk, what the sweep says, within its accepted ceiling and the compute the demo states.
    const billed = -debits.reduce((sum, entry) => sum + entry.computeMs, 0);
    expect(billed).toBe(done.computeMs);
    expect(billed).toBeGreaterThan(0);
    expect(billed).toBeLessThanOrEqual(done.ceilingMs);
    expect(done.ceilingMs).toBeLessThanOrEqual(WATCH_SWEEP_STATED.maxBilledMs);
    console.log(`[demo watch] ${steps.length} steps over ${doneAt - steps[0].at} ms (spread over ${DURATION_MS} ms); billed ${billed} ms (ceiling ${done.ceilingMs} ms); verdicts ${JSON.stringify(done.verdictCounts)}`);

    // The pace changes when cells land, not what they hold: equal to a fresh run, byte for byte.
    const spec = done.spec as SweepSpec;
    const pool = createChunkPool({ threads: 1, entry: "source" });
    try {
      const fresh: CellResult[] = [];
      await runSweep(spec, { pool, onResults: (results) => fresh.push(...results) });
      const stored = await storedCells(db, done);
      expect(resultsToCsv(resultsHeader(spec), stored)).toBe(resultsToCsv(resultsHeader(spec), fresh));
    } finally {
      await pool.close();
    }
  }, 360_000);
});
