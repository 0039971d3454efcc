import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { eq, sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { outbox, type OutboxRow } from "@/db/schema";
import { backoffMs, enqueueOutbox, OutboxDispatcher, PermanentDeliveryError } from "@/lib/outbox/outbox";
import { queueMail } from "@/lib/outbox/mail";
import { closeTestDb, countRows, useFreshDb } from "../helpers/db";

let db: Db;
beforeAll(async () => {
  db = await useFreshDb();
});
afterAll(closeTestDb);
beforeEach(async () => {
  await db.delete(outbox);
});

/**
 * A clock the test moves by hand, so retries become due without waiting. It starts at the database's
 * own now(), which is what enqueueOutbox stamps on a new row: a clock of its own (a fixed date, or
 * this process's clock against a server elsewhere) would leave rows never due, or due at once.
 */
async function manualClock() {
  const result = await db.execute(sql`select now() as now`);
  let now = new Date((result as unknown as { rows: { now: string | Date }[] }).rows[0].now).getTime();
  return { now: () => new Date(now), advance: (ms: number) => (now += ms) };
}

describe("outbox", () => {
  it("queues one row per idempotency key, however often a writer retries", async () => {
    const first = await enqueueOutbox(db, { kind: "test", idempotencyKey: "k1", payload: { n: 1 } });
    const again = await db.transaction((tx) => enqueueOutbox(tx, { kind: "test", idempotencyKey: "k1", payload: { n: 2 } }));
    expect([first, again]).toEqual([true, false]);
    const rows = await db.select().from(outbox);
    expect(rows).toHaveLength(1);
    expect(rows[0].payload).toEqual({ n: 1 });
  });

  it("nothing is queued when the writer's transaction rolls back", async () => {
    await expect(
      db.transaction(async (tx) => {
        await enqueueOutbox(tx, { kind: "test", idempotencyKey: "rolled-back", payload: {} });
        throw new Error("the change failed");
      }),
    ).rejects.toThrow("the change failed");
    expect(await countRows(db, outbox)).toBe(0);
  });

  it("delivers each row once, in order, and never again after it is delivered", async () => {
    const seen: string[] = [];
    const dispatcher = new OutboxDispatcher({ db, handlers: { test: async (row) => void seen.push(row.idempotencyKey) } });
    for (const key of ["a", "b", "c"]) await enqueueOutbox(db, { kind: "test", idempotencyKey: key, payload: {} });
    expect(await dispatcher.dispatchDue()).toEqual({ delivered: 3, retried: 0, failed: 0 });
    expect(await dispatcher.dispatchDue()).toEqual({ delivered: 0, retried: 0, failed: 0 });
    expect(seen).toEqual(["a", "b", "c"]);
    const rows = await db.select().from(outbox);
    expect(rows.every((r) => r.status === "delivered" && r.deliveredAt !== null && r.attempts === 1)).toBe(true);
  });

  it("keeps a message while the receiver is down and delivers it once when it returns", async () => {
    await enqueueOutbox(db, { kind: "test", idempotencyKey: "down", payload: {} });
    // Started after the row was stamped, so the row is due at once under this clock.
    const clock = await manualClock();
    let up = false;
    let deliveries = 0;
    const dispatcher = new OutboxDispatcher({
      db,
      now: clock.now,
      handlers: {
        test: async () => {
          if (!up) throw new Error("connect ECONNREFUSED 127.0.0.1:12111");
          deliveries++;
        },
      },
    });
    expect(await dispatcher.dispatchDue()).toEqual({ delivered: 0, retried: 1, failed: 0 });
    // Not due again before its back-off has passed.
    expect(await dispatcher.dispatchDue()).toEqual({ delivered: 0, retried: 0, failed: 0 });
    clock.advance(backoffMs(1));
    expect(await dispatcher.dispatchDue()).toEqual({ delivered: 0, retried: 1, failed: 0 });
    const [waiting] = await db.select().from(outbox);
    expect(waiting).toMatchObject({ status: "pending", attempts: 2, lastError: "connect ECONNREFUSED 127.0.0.1:12111" });
    up = true;
    clock.advance(backoffMs(2));
    expect(await dispatcher.dispatchDue()).toEqual({ delivered: 1, retried: 0, failed: 0 });
    clock.advance(backoffMs(10));
    await dispatcher.dispatchDue();
    expect(deliveries).toBe(1);
  });

  it("back-off grows and stays capped, so nothing is dropped for being slow (common practice: capped exponential back-off)", () => {
    const waits = [1, 2, 3, 4, 5, 6, 50].map(backoffMs);
    for (let i = 1; i < waits.length; i++) expect(waits[i]).toBeGreaterThanOrEqual(waits[i - 1]);
    expect(waits.at(-1)).toBe(waits[4]);
  });

  it("marks a message failed, not retried, when the handler says it can never succeed, and when its kind is unknown", async () => {
    const dispatcher = new OutboxDispatcher({
      db,
      handlers: {
        test: async () => {
          throw new PermanentDeliveryError("meter event refused: customer deleted");
        },
      },
    });
    await enqueueOutbox(db, { kind: "test", idempotencyKey: "bad", payload: {} });
    await enqueueOutbox(db, { kind: "no-such-kind", idempotencyKey: "unknown", payload: {} });
    expect(await dispatcher.dispatchDue()).toEqual({ delivered: 0, retried: 0, failed: 2 });
    const rows = await db.select().from(outbox).orderBy(outbox.id);
    expect(rows.map((r) => [r.status, r.lastError])).toEqual([
      ["failed", "meter event refused: customer deleted"],
      ["failed", 'no handler for outbox kind "no-such-kind"'],
    ]);
  });

  it("two dispatchers on one database never deliver the same row twice", async () => {
    const seen: string[] = [];
    const slow = async (row: OutboxRow) => {
      await new Promise((resolve) => setTimeout(resolve, 5));
      seen.push(row.idempotencyKey);
    };
    for (let i = 0; i < 40; i++) await enqueueOutbox(db, { kind: "test", idempotencyKey: `race-${i}`, payload: {} });
    const a = new OutboxDispatcher({ db, handlers: { test: slow }, batch: 5 });
    const b = new OutboxDispatcher({ db, handlers: { test: slow }, batch: 5 });
    const [ra, rb] = await Promise.all([a.dispatchDue(), b.dispatchDue()]);
    expect(ra.delivered + rb.delivered).toBe(40);
    expect(new Set(seen).size).toBe(40);
    expect(seen).toHaveLength(40);
  });

  it("a row whose dispatcher died mid-delivery is delivered again once its lease lapses", async () => {
    await enqueueOutbox(db, { kind: "test", idempotencyKey: "orphan", payload: {} });
    const clock = await manualClock();
    // A dispatcher that claimed the row and then died: its lease is set, nothing else.
    await db.update(outbox).set({ leaseOwner: "dead", leaseExpiresAt: new Date(clock.now().getTime() + 60_000) }).where(eq(outbox.idempotencyKey, "orphan"));
    let delivered = 0;
    const dispatcher = new OutboxDispatcher({ db, now: clock.now, handlers: { test: async () => void delivered++ } });
    expect((await dispatcher.dispatchDue()).delivered).toBe(0);
    clock.advance(60_001);
    expect((await dispatcher.dispatchDue()).delivered).toBe(1);
    expect(delivered).toBe(1);
  });

  it("queueMail stores the message for the mail handler, once per key", async () => {
    const content = { subject: "Low balance", text: "12.50 minutes left", html: "<p>12.50 minutes left</p>" };
    expect(await queueMail(db, { idempotencyKey: "mail:low:1", to: "maren@gannetyard.test", content })).toBe(true);
    expect(await queueMail(db, { idempotencyKey: "mail:low:1", to: "maren@gannetyard.test", content })).toBe(false);
    const [row] = await db.select().from(outbox);
    expect(row.kind).toBe("mail");
    expect(row.payload).toEqual({ to: "maren@gannetyard.test", ...content });
  });
});
