/**
 * The demo's watch sweep: a sweep a visitor sees running and can watch finish, its map filling in.
 *
 * It is submitted through the ordinary queue (submitSweep) when the demo engineer signs in for the
 * first time (server/seed.ts `startDemoWatch`, registered by server/startup.ts as a sign-in hook on
 * demo servers), not at seed time: a visitor may sign in minutes after start-up, and a sweep started
 * then would long be finished. Once per database (keyed by its name): a second sign-in, or a restart,
 * starts nothing new.
 *
 * Its compute is small (144 cells of a few tens of milliseconds: seconds in all, within
 * `WATCH_SWEEP_STATED.maxBilledMs`), so on its own it would finish in a few seconds. The pacer
 * (WatchPacer) spreads it over about `WATCH_DURATION_MS` with the sweep's status columns only: it
 * holds the sweep paused with a reason of its own (`WATCH_PACING_REASON`) and, step by step, lets
 * the queue runner take one claim of its chunks (resume, wait for the claim, pause again); the wait
 * between steps is sized from how many chunks a claim took. The runner's rules apply throughout:
 * claimed chunks land and are billed as usual, the run limits still pause it (the pacer never lifts
 * a pause that is not its own), and the pacer holds it while any other sweep or check on the server
 * is queued or running, so a visitor's own work never waits behind it. The pace changes when cells
 * land, never what they hold: same spec, same cells, byte for byte.
 */
import "server-only";
import { and, eq, inArray, ne, sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { sweepChunks, sweeps, type Sweep } from "@/db/schema";
import { pokeProcessRunner } from "@/lib/queue/poke";
import { submitSweep } from "@/lib/queue/submit";
import type { SweepSpecInput } from "@/lib/sweeps/spec";

/** The watch sweep's name: it keys the sweep, so it is submitted once per database. */
export const WATCH_SWEEP_NAME = "Crateslide cargo bin: 32 kegs tipped into the loading bin, stiffness × frame rate";

/** Cells per chunk: small, so each claim lands a small part of the map. */
export const WATCH_CELLS_PER_CHUNK = 2;

/** What the watch sweep costs, as the demo states it (README, closing note): at most this much billed compute. */
export const WATCH_SWEEP_STATED = { cells: 144, chunks: 72, maxBilledMs: 30_000 } as const;

/** The reason the sweep shows between two of its paced steps (the studio home and the sweep page show it). */
export const WATCH_PACING_REASON = "demo pace: a few cells every few seconds, so you can watch the map fill in";

/** How long the pacer spreads the sweep over (ms), when nothing else runs. */
export const WATCH_DURATION_MS = 60_000;

/**
 * Crateslide's cargo bin: 32 kegs (5 kg, 0.2 m) tipped into a 3 m wide bin settle under gravity.
 * Contact stiffness (1e3 … 1e8 N/m) against the frame rate (240 Hz down to 24 Hz): soft contacts
 * sink deep, a band in the middle is stable, stiff contacts at low frame rates explode, and fast
 * kegs at coarse steps pass through each other. Each cell is a few tens of milliseconds of compute.
 */
export function watchSweepSpec(): SweepSpecInput {
  return {
    name: WATCH_SWEEP_NAME,
    scenario: {
      scene: { kind: "box", count: 32, massKg: 5, radiusM: 0.2, widthM: 3, heightM: 4, maxSpeedMPerS: 1, gravityMPerS2: 9.81 },
      contact: { model: "linear", stiffness: 10_000, damping: { kind: "restitution", value: 0.5 } },
      integrator: "symplectic-euler",
      dtS: 1 / 60,
      substeps: 16,
      durationS: 2,
      seed: 7,
    },
    axes: [
      { parameter: "contact.stiffness", spacing: "log", from: 1_000, to: 100_000_000, count: 16 },
      { parameter: "dtS", values: [1 / 240, 1 / 144, 1 / 120, 1 / 90, 1 / 60, 1 / 50, 1 / 45, 1 / 30, 1 / 24] },
    ],
  } as SweepSpecInput;
}

export async function findWatchSweep(db: Db, studioId: string): Promise<Sweep | null> {
  const [row] = await db.select().from(sweeps).where(and(eq(sweeps.studioId, studioId), eq(sweeps.name, WATCH_SWEEP_NAME))).limit(1);
  return row ?? null;
}

/** One submit at a time in this process: two sign-ins at once submit the sweep once. */
let submitting: Promise<Sweep | null> = Promise.resolve(null);

/**
 * Submits the watch sweep for the studio unless it has one already; returns the new sweep, or null
 * when there was one. The sweep starts held by the pacer (paused with WATCH_PACING_REASON).
 */
export function submitWatchSweep(db: Db, studioId: string, engineerId: string | null): Promise<Sweep | null> {
  const next = submitting.then(async () => {
    if (await findWatchSweep(db, studioId)) return null;
    const sweep = await submitSweep(db, studioId, { spec: watchSweepSpec(), name: WATCH_SWEEP_NAME, createdByUserId: engineerId }, { chunkOptions: { maxCellsPerChunk: WATCH_CELLS_PER_CHUNK } });
    // Held from the start: the pacer lets it run step by step (and not before other work waiting).
    await db.update(sweeps).set({ status: "paused", reason: WATCH_PACING_REASON }).where(and(eq(sweeps.id, sweep.id), eq(sweeps.status, "queued")));
    return sweep;
  });
  submitting = next.catch(() => null);
  return next;
}

export interface WatchPacerOptions {
  db: Db;
  studioId: string;
  /** How long to spread the sweep over (ms). */
  durationMs?: number;
  /** How often the pacer looks while it waits for a claim (ms). */
  lookMs?: number;
  /** How often it looks while idle: no watch sweep yet, or other work running (ms). */
  idleMs?: number;
  /** Longest wait for the runner to claim after a resume (ms); the pacer holds the sweep again after it. */
  claimWaitMs?: number;
  /** Wakes the queue runner after a resume (default: this process's runner). */
  poke?: () => void;
  /** Called after each step that let the sweep run, with the chunks that step's claim took (tests count them). */
  onStep?: (step: { sweepId: string; chunksTaken: number }) => void;
}

/**
 * Paces the studio's watch sweep until it is done, cancelled or failed. Idle (a look a second)
 * while the studio has no watch sweep yet; `nudge()` after a submit takes the first step at once.
 */
export class WatchPacer {
  private readonly db: Db;
  private readonly studioId: string;
  private readonly durationMs: number;
  private readonly lookMs: number;
  private readonly idleMs: number;
  private readonly claimWaitMs: number;
  private readonly poke: () => void;
  private readonly onStep?: (step: { sweepId: string; chunksTaken: number }) => void;
  private timer: NodeJS.Timeout | null = null;
  private stopped = false;
  private nextStepAt = 0;
  /** The step under way: chunks taken when it resumed the sweep, and when it gives up waiting for a claim. */
  private step: { sweepId: string; takenBefore: number; until: number } | null = null;
  private finished: (() => void) | null = null;
  /** Resolves when the watch sweep is done, cancelled or failed, or the pacer is stopped. */
  readonly done: Promise<void>;

  constructor(options: WatchPacerOptions) {
    this.db = options.db;
    this.studioId = options.studioId;
    this.durationMs = options.durationMs ?? WATCH_DURATION_MS;
    this.lookMs = options.lookMs ?? 20;
    this.idleMs = options.idleMs ?? 1_000;
    this.claimWaitMs = options.claimWaitMs ?? 3_000;
    this.poke = options.poke ?? pokeProcessRunner;
    this.onStep = options.onStep;
    this.done = new Promise((resolve) => (this.finished = resolve));
  }

  start(): void {
    this.stopped = false;
    this.schedule(0);
  }

  stop(): void {
    this.stopped = true;
    if (this.timer) clearTimeout(this.timer);
    this.timer = null;
    this.finished?.();
  }

  /** A watch sweep was just submitted: take the first step now rather than at the next look. */
  nudge(): void {
    if (this.stopped) return;
    this.nextStepAt = 0;
    this.schedule(0);
  }

  private schedule(ms: number): void {
    if (this.stopped) return;
    if (this.timer) clearTimeout(this.timer);
    this.timer = setTimeout(() => void this.look(), ms);
    this.timer.unref?.();
  }

  private async look(): Promise<void> {
    this.timer = null;
    let wait: number;
    try {
      wait = await this.tick();
    } catch (error) {
      // A closed database (the process is stopping) or a passing error: stop rather than log every look.
      console.error(`[kickdrift] demo watch sweep pacer stopped: ${(error as Error).message}`);
      this.stop();
      return;
    }
    if (wait < 0) this.stop();
    else this.schedule(wait);
  }

  /** One look; returns the wait before the next (ms), or −1 when there is nothing more to pace. */
  private async tick(): Promise<number> {
    const sweep = await findWatchSweep(this.db, this.studioId);
    if (!sweep) return this.idleMs;
    if (sweep.status === "done" || sweep.status === "cancelled" || sweep.status === "failed") return -1;
    const now = Date.now();
    if (sweep.status === "queued" || sweep.status === "running") {
      // A step under way: hold the sweep again as soon as the runner has claimed (or after the wait).
      const taken = await this.chunksTaken(sweep.id);
      const step = this.step?.sweepId === sweep.id ? this.step : null;
      if (step && taken <= step.takenBefore && now < step.until) return this.lookMs;
      await this.db
        .update(sweeps)
        .set({ status: "paused", reason: WATCH_PACING_REASON })
        .where(and(eq(sweeps.id, sweep.id), inArray(sweeps.status, ["queued", "running"])));
      const took = step ? taken - step.takenBefore : 0;
      if (step) this.onStep?.({ sweepId: sweep.id, chunksTaken: took });
      this.step = null;
      // The next step after this claim's share of the duration: a claim of k of n chunks waits k/n of it.
      this.nextStepAt = now + Math.max(this.lookMs, Math.round((this.durationMs * Math.max(1, took)) / Math.max(1, sweep.chunks)));
      return this.lookMs;
    }
    // Paused: only a pause of its own is the pacer's to lift (a run limit's pause is not).
    if (sweep.reason !== WATCH_PACING_REASON) return this.idleMs;
    if (now < this.nextStepAt) return Math.min(this.idleMs, this.nextStepAt - now);
    if (await this.otherWorkWaiting(sweep.id)) return this.idleMs;
    const takenBefore = await this.chunksTaken(sweep.id);
    const resumed = await this.db
      .update(sweeps)
      .set({ status: sql`case when ${sweeps.startedAt} is null then 'queued' else 'running' end`, reason: null })
      .where(and(eq(sweeps.id, sweep.id), eq(sweeps.status, "paused"), eq(sweeps.reason, WATCH_PACING_REASON)))
      .returning({ id: sweeps.id });
    if (resumed.length === 0) return this.lookMs;
    this.step = { sweepId: sweep.id, takenBefore, until: now + this.claimWaitMs };
    this.poke();
    return this.lookMs;
  }

  /** Chunks of the sweep the runner has taken (running or landed). */
  private async chunksTaken(sweepId: string): Promise<number> {
    const [row] = await this.db
      .select({ n: sql<string>`count(*)` })
      .from(sweepChunks)
      .where(and(eq(sweepChunks.sweepId, sweepId), ne(sweepChunks.status, "queued")));
    return Number(row?.n ?? 0);
  }

  /** Any other sweep or check on the server queued or running: the watch sweep makes way. */
  private async otherWorkWaiting(sweepId: string): Promise<boolean> {
    const [row] = await this.db
      .select({ id: sweeps.id })
      .from(sweeps)
      .where(and(ne(sweeps.id, sweepId), inArray(sweeps.status, ["queued", "running"])))
      .limit(1);
    return Boolean(row);
  }
}
