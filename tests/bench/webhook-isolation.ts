/**
 * Benchmark: a webhook receiver that hangs does not delay chunk recording.
 *
 * Three set-ups run the same work — SWEEPS small multi-chunk pair sweeps submitted one after
 * another and run by the real QueueRunner to the end — in rotation for ROUNDS rounds:
 *   0. no webhook machinery at all (for reference);
 *   A. the production delivery path (the webhook scan every second, an OutboxDispatcher at its
 *      default poll) with an endpoint, subscribed to every event type, whose receiver answers 200
 *      at once — the peer;
 *   B. the same with a receiver that accepts the connection and never answers (each attempt waits
 *      the full WEBHOOK_TIMEOUT_MS).
 * Printed: median wall time of a round and median time between recorded chunks (the runner's
 * onRecorded hook) per set-up, the ratio B / A (target ≤ 1.10×: the hang adds no measurable delay),
 * and in B how many deliveries were queued and how many requests the receiver held open.
 *
 * Prints figures and asserts nothing. Run alone: `npx tsx --import ./scripts/server-only-hook.mjs tests/bench/webhook-isolation.ts`; or
 * `npm run bench -- webhook-isolation`.
 */
import { createServer, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { eq } from "drizzle-orm";
import type { Db } from "@/db/client";
import { webhookDeliveries, webhookEndpoints, WEBHOOK_EVENT_TYPES } from "@/db/schema";
import { OutboxDispatcher } from "@/lib/outbox/outbox";
import { QueueRunner } from "@/lib/queue/runner";
import { submitSweep } from "@/lib/queue/submit";
import { createChunkPool } from "@/lib/sweeps/pool";
import type { SweepSpecInput } from "@/lib/sweeps/spec";
import { createEndpoint, deliverWebhook, scanWebhookEvents, WEBHOOK_KIND, WEBHOOK_TIMEOUT_MS } from "@/lib/webhooks/webhooks";
import { closeTestDb, useFreshDb as openFreshTestDb } from "../helpers/db";
import { makeSweepStudio } from "../integration/sweeps/support";
import { table, type BenchModule } from "./bench-module";

const ROUNDS = 4;
const SWEEPS = 4;
const TARGET_RATIO = 1.1;
/** A hang guard, not a speed check. */
const SWEEP_TIMEOUT_MS = 120_000;

/** An invented curling-like game, "Pebblestone": stone against a resting stone, 24 × 16 cells in several chunks. */
function spec(variant: number): SweepSpecInput {
  return {
    name: `bench: Pebblestone ${variant}`,
    scenario: {
      // The gap differs per sweep, so no sweep is served from the result cache.
      scene: { kind: "pair", massAKg: 19, massBKg: 19, radiusAM: 0.145, radiusBM: 0.145, speedAMPerS: 2, speedBMPerS: 0, offsetFraction: 0, gapM: 0.01 + variant * 1e-5 },
      contact: { model: "linear", stiffness: 1e6, damping: { kind: "restitution", value: 0.8 } },
      integrator: "symplectic-euler",
      dtS: 1e-3,
      substeps: 1,
      durationS: 2,
    },
    axes: [
      { parameter: "contact.stiffness", spacing: "log", from: 1e4, to: 1e8, count: 24 },
      { parameter: "scene.offsetFraction", spacing: "linear", from: 0, to: 0.9, count: 16 },
    ],
  };
}

/** Accepts every request and never answers (`hang`), or answers 200 at once. */
async function receiverOf(hang: boolean): Promise<{ server: Server; url: string; open: () => number }> {
  let open = 0;
  const server = createServer((req, res) => {
    if (!hang) {
      req.resume();
      req.on("end", () => res.writeHead(200).end());
      return;
    }
    open++;
    req.on("close", () => open--);
  });
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  return { server, url: `http://127.0.0.1:${(server.address() as AddressInfo).port}/hook`, open: () => open };
}

const median = (values: number[]) => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)];

export const webhookIsolation: BenchModule = {
  id: "webhook-isolation",
  title: "chunk recording with a hanging webhook receiver vs none",
  async run() {
    const db: Db = await openFreshTestDb();
    const pool = createChunkPool({ threads: 1, entry: "source" });
    const recordedAt: number[] = [];
    const finished = new Map<string, () => void>();
    const runner = new QueueRunner({
      db,
      pool,
      pollMs: 20,
      onRecorded: (sweepId, sweepFinished) => {
        recordedAt.push(performance.now());
        if (sweepFinished) finished.get(sweepId)?.();
      },
    });
    await runner.start();
    const receiver = await receiverOf(true);
    const fastReceiver = await receiverOf(false);
    let variant = 0;
    const results: Record<"0" | "A" | "B", { wallMs: number[]; gapMs: number[] }> = { "0": { wallMs: [], gapMs: [] }, A: { wallMs: [], gapMs: [] }, B: { wallMs: [], gapMs: [] } };
    let attempted = 0;
    const stopping: Promise<void>[] = [];
    let heldOpen = 0;

    async function round(kind: "0" | "A" | "B"): Promise<void> {
      const studio = await makeSweepStudio(`Bench ${kind} ${variant}`, 600 * 60_000);
      let dispatcher: OutboxDispatcher | null = null;
      let scan: NodeJS.Timeout | null = null;
      if (kind !== "0") {
        const owner = studio.owner;
        await createEndpoint(db, studio.studioId, owner, { url: kind === "B" ? receiver.url : fastReceiver.url, events: [...WEBHOOK_EVENT_TYPES] });
        dispatcher = new OutboxDispatcher({ db, handlers: { [WEBHOOK_KIND]: (row) => deliverWebhook(db, row) } });
        dispatcher.start();
        scan = setInterval(() => void scanWebhookEvents(db).then((queued) => queued.length && dispatcher?.poke()), 1_000);
      }
      recordedAt.length = 0;
      const started = performance.now();
      for (let n = 0; n < SWEEPS; n++) {
        const sweep = await submitSweep(db, studio.studioId, { spec: spec(variant++) });
        await new Promise<void>((resolve, reject) => {
          const timer = setTimeout(() => reject(new Error(`sweep ${sweep.id} not done after ${SWEEP_TIMEOUT_MS} ms`)), SWEEP_TIMEOUT_MS);
          finished.set(sweep.id, () => {
            clearTimeout(timer);
            resolve();
          });
          runner.poke();
        });
      }
      results[kind].wallMs.push(performance.now() - started);
      const gaps = recordedAt.slice(1).map((at, i) => at - recordedAt[i]);
      results[kind].gapMs.push(median(gaps));
      if (kind !== "0") {
        // Let the scan find the last sweep and the dispatcher start hanging on it before stopping.
        await new Promise((resolve) => setTimeout(resolve, 1_500));
        heldOpen = Math.max(heldOpen, receiver.open());
        const [endpoint] = await db.select().from(webhookEndpoints).where(eq(webhookEndpoints.studioId, studio.studioId));
        const rows = await db.select().from(webhookDeliveries).where(eq(webhookDeliveries.endpointId, endpoint.id));
        if (kind === "B") attempted += rows.length;
        if (scan) clearInterval(scan);
        if (dispatcher) stopping.push(dispatcher.stop()); // an attempt in flight ends by its own time limit
      }
    }

    await round("0"); // warm-up, untimed
    results["0"] = { wallMs: [], gapMs: [] };
    for (let r = 0; r < ROUNDS; r++) {
      await round("0");
      await round("A");
      await round("B");
    }
    const wall0 = median(results["0"].wallMs);
    const gap0 = median(results["0"].gapMs);
    const wallA = median(results.A.wallMs);
    const wallB = median(results.B.wallMs);
    const gapA = median(results.A.gapMs);
    const gapB = median(results.B.gapMs);
    console.log(
      table([
        ["set-up", "round wall (ms, median)", "between recorded chunks (ms, median)"],
        ["0: no webhooks", wall0.toFixed(0), gap0.toFixed(1)],
        ["A: receiver answers at once", wallA.toFixed(0), gapA.toFixed(1)],
        ["B: hanging receiver", wallB.toFixed(0), gapB.toFixed(1)],
        ["B / A", (wallB / wallA).toFixed(3), (gapB / gapA).toFixed(3)],
      ]),
    );
    console.log(`target B / A ≤ ${TARGET_RATIO}×; ${SWEEPS} sweeps of 384 cells per round, ${ROUNDS} rounds of each set-up in rotation`);
    console.log(`in B: ${attempted} deliveries queued to the hanging receiver, up to ${heldOpen} requests held open by it (each attempt gives up after ${WEBHOOK_TIMEOUT_MS} ms)`);
    await Promise.all(stopping);
    for (const server of [receiver.server, fastReceiver.server]) {
      server.closeAllConnections();
      server.close();
    }
    await runner.stop();
    await pool.close();
    await closeTestDb();
  },
};

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  webhookIsolation.run().catch((error: unknown) => {
    console.error(error);
    process.exit(1);
  });
}
