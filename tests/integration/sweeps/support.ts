/**
 * Shared set-up for the sweep integration tests: a fresh database with a running queue runner,
 * invented studios, small specs of invented game scenes, grants, and a way to wait for the runner.
 */
import { eq } from "drizzle-orm";
import { getDb, type Db } from "@/db/client";
import { ledgerEntries, sweepResults, sweeps, type Sweep, type User } from "@/db/schema";
import { readBlob } from "@/lib/queue/result-store";
import { PackedView } from "@/lib/sweeps/packed";
import { appendLedgerEntry } from "@/lib/ledger/ledger";
import { QueueRunner } from "@/lib/queue/runner";
import { createChunkPool, type ChunkPool } from "@/lib/sweeps/pool";
import type { SweepSpecInput } from "@/lib/sweeps/spec";
// Aliased as in tests/bench: "use…" names are taken for React hooks by the linter.
import { closeTestDb, useFreshDb as openFreshTestDb } from "../../helpers/db";
import { makeStudio, makeUser } from "../../helpers/factories";
import { sessionCookie } from "../../helpers/http";

export interface TestStudio {
  studioId: string;
  owner: User;
  engineer: User;
  finance: User;
  cookies: { owner: string; engineer: string; finance: string };
}

export async function makeSweepStudio(name: string, grantMs = 60 * 60_000): Promise<TestStudio> {
  const owner = await makeUser({ name: "owner" });
  const engineer = await makeUser({ name: "engineer" });
  const finance = await makeUser({ name: "finance" });
  const studioId = await makeStudio(name, [
    { user: owner, role: "owner" },
    { user: engineer, role: "engineer" },
    { user: finance, role: "finance" },
  ]);
  if (grantMs > 0) await grant(studioId, grantMs, `test:grant:${studioId}`);
  return {
    studioId,
    owner,
    engineer,
    finance,
    cookies: { owner: await sessionCookie(owner), engineer: await sessionCookie(engineer), finance: await sessionCookie(finance) },
  };
}

let running: { pool: ChunkPool; runner: QueueRunner } | undefined;

/**
 * A fresh database (useFreshDb) with a queue runner on one worker thread, started, and a studio
 * (makeSweepStudio) for each name given: the set-up of test files whose sweeps must run to the
 * end. Call once per file in beforeAll, with stopSweepRunner in afterAll.
 */
export async function startSweepRunner(...studioNames: string[]): Promise<{ db: Db; studios: TestStudio[] }> {
  const db = await openFreshTestDb();
  const pool = createChunkPool({ threads: 1, entry: "source" });
  const runner = new QueueRunner({ db, pool, pollMs: 20 });
  running = { pool, runner };
  await runner.start();
  const studios: TestStudio[] = [];
  for (const name of studioNames) studios.push(await makeSweepStudio(name));
  return { db, studios };
}

/** Stops the runner of startSweepRunner, closes its threads and the test database. */
export async function stopSweepRunner(): Promise<void> {
  await running?.runner.stop();
  await running?.pool.close();
  running = undefined;
  await closeTestDb();
}

export async function grant(studioId: string, computeMs: number, key: string): Promise<void> {
  await appendLedgerEntry(await getDb(), { studioId, kind: "adjustment", computeMs, idempotencyKey: key, memo: "test grant" });
}

/** Puck against striker of the invented air-hockey game "Puckyard": 5 stiffnesses × 3 timesteps (the unit tests' fixture). */
export { puckPairSpec as puckSpec } from "../../unit/sweeps/fixtures";

/** A ball pit of an invented party game, "Jellybean Jar": enough work per cell for measured compute to mean something. */
export function ballPitSpec(durationS = 0.5): SweepSpecInput {
  return {
    name: "Jellybean Jar ball pit",
    scenario: {
      scene: { kind: "box", count: 20, massKg: 0.05, radiusM: 0.03, widthM: 1, heightM: 1, maxSpeedMPerS: 1, gravityMPerS2: 9.81 },
      contact: { model: "linear", stiffness: 1e4, damping: { kind: "coefficient", value: 0.5 } },
      integrator: "velocity-verlet",
      dtS: 1e-3,
      durationS,
      seed: 7,
    },
    axes: [
      { parameter: "scene.count", spacing: "linear", from: 10, to: 30, count: 3 },
      { parameter: "contact.stiffness", spacing: "log", from: 1e3, to: 1e5, count: 3 },
    ],
  };
}

export async function sweepRow(id: string): Promise<Sweep> {
  const [row] = await (await getDb()).select().from(sweeps).where(eq(sweeps.id, id));
  return row;
}

/**
 * Polls until every results row of the sweep holds scenario keys: the runner keys stored runs while
 * its pool is idle (a hang guard, not a speed check). Returns the rows' blob locations.
 */
export async function waitForKeyed(sweepId: string, timeoutMs = 60_000): Promise<(string | null)[]> {
  const db = await getDb();
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const rows = await db.select().from(sweepResults).where(eq(sweepResults.sweepId, sweepId));
    const views = await Promise.all(rows.map(async (row) => new PackedView(await readBlob(row))));
    if (rows.length > 0 && views.every((view) => view.hasKeys)) return rows.map((row) => row.location);
    if (Date.now() > deadline) throw new Error(`sweep ${sweepId}: ${views.filter((v) => !v.hasKeys).length} of ${rows.length} runs still without keys after ${timeoutMs} ms`);
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
}

/** Polls until the predicate holds for the sweep (a hang guard, not a speed check). */
export async function waitForSweep(id: string, predicate: (sweep: Sweep) => boolean, timeoutMs = 90_000): Promise<Sweep> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const row = await sweepRow(id);
    if (predicate(row)) return row;
    if (Date.now() > deadline) throw new Error(`sweep ${id} still ${row.status} (${row.chunksDone}/${row.chunks} chunks) after ${timeoutMs} ms`);
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
}

export async function usageEntries(sweepId: string) {
  const rows = await (await getDb()).select().from(ledgerEntries).where(eq(ledgerEntries.sweepId, sweepId));
  return rows.filter((row) => row.kind === "usage");
}

/**
 * A pool whose chunks start only when the test lets them: the test holds the work at a known point
 * (a chunk claimed and waiting) instead of racing the machine's speed.
 */
export interface GatedPool extends ChunkPool {
  /** Let `n` more chunks start (those already waiting first). */
  allow(n: number): void;
  /** Let every chunk start from now on. */
  open(): void;
  /** Chunks claimed and waiting at the gate. */
  readonly waiting: number;
}

export function gatedPool(inner: ChunkPool): GatedPool {
  let permits = 0;
  const queue: (() => void)[] = [];
  const release = () => {
    while (permits > 0 && queue.length > 0) {
      permits -= 1;
      queue.shift()!();
    }
  };
  return {
    get threads() {
      return inner.threads;
    },
    get entry() {
      return inner.entry;
    },
    get pending() {
      return inner.pending + queue.length;
    },
    get inFlight() {
      return inner.inFlight;
    },
    get waiting() {
      return queue.length;
    },
    async run(task, options) {
      if (permits > 0) permits -= 1;
      else await new Promise<void>((resolve) => queue.push(resolve));
      if (options?.signal?.aborted) throw options.signal.reason ?? new Error("aborted");
      return inner.run(task, options);
    },
    allow(n) {
      permits += n;
      release();
    },
    open() {
      permits = Number.POSITIVE_INFINITY;
      release();
    },
    idle: () => inner.idle(),
    close: () => inner.close(),
  };
}

/** Polls until the condition holds (a hang guard, not a speed check). */
export async function waitForCondition(what: string, condition: () => boolean | Promise<boolean>, timeoutMs = 90_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!(await condition())) {
    if (Date.now() > deadline) throw new Error(`timed out after ${timeoutMs} ms waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
}
