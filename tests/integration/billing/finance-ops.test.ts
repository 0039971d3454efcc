/**
 * Admin → Finance: a meter event Stripe refused for good is listed, and an admin puts it back in the
 * outbox as it was or re-keyed (audited once, however often clicked); the scheduled reconciliation
 * e-mails the admins once per distinct set of differences and reports 0 when everything matches.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq, like } from "drizzle-orm";
import type { Db } from "@/db/client";
import { auditLog, outbox, studioQuotas } from "@/db/schema";
import { ensureOverageSubscription } from "@/lib/billing/catalog";
import { FINANCE_RECONCILE_EVERY_MS, FINANCE_RECONCILE_KIND, reconcileFinance, runScheduledFinanceReconcile } from "@/lib/billing/finance-ops";
import { deliverMeterEvent } from "@/lib/billing/meter";
import { METER_EVENT_KIND, recordChunkUsage } from "@/lib/billing/usage";
import { appendLedgerEntry, usageKey } from "@/lib/ledger/ledger";
import { OutboxDispatcher } from "@/lib/outbox/outbox";
import { submitSweep } from "@/lib/queue/submit";
import { GET as financeGet } from "@/app/api/v1/admin/finance/route";
import { POST as retryPost } from "@/app/api/v1/admin/finance/meter-events/[outboxId]/retry/route";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { makeUser } from "../../helpers/factories";
import { call, errorOf, sessionCookie } from "../../helpers/http";
import { grant, makeSweepStudio, puckSpec, type TestStudio } from "../sweeps/support";
import { startBillingHarness, type BillingHarness } from "./support";

let db: Db;
let h: BillingHarness;
let adminCookie: string;
let adminEmail: string;
let s: TestStudio;
let sweepId: string;

beforeAll(async () => {
  db = await useFreshDb();
  h = await startBillingHarness();
  const admin = await makeUser({ name: "platform-admin", isAdmin: true });
  adminEmail = admin.email;
  adminCookie = await sessionCookie(admin);
  s = await makeSweepStudio("Quillmoss Studio", 0);
  await db.insert(studioQuotas).values({ studioId: s.studioId, overageAllowed: true });
  await ensureOverageSubscription(db, h.stripe, s.studioId);
  await grant(s.studioId, 60 * 60_000, `grant:${s.studioId}`);
  sweepId = (await submitSweep(db, s.studioId, { spec: puckSpec() })).id;
  await appendLedgerEntry(db, { studioId: s.studioId, kind: "adjustment", computeMs: -(60 * 60_000), idempotencyKey: `grant-back:${s.studioId}`, memo: "test: grant taken back" });
});
afterAll(async () => {
  await h.close();
  await closeTestDb();
});

const meterRow = async (chunkIndex: number) => (await db.select().from(outbox).where(and(eq(outbox.kind, METER_EVENT_KIND), eq(outbox.idempotencyKey, `meter:${usageKey(sweepId, chunkIndex)}`))))[0];
const retry = (outboxId: number | string, body: unknown, cookie = adminCookie) =>
  call(retryPost, { method: "POST", path: `/api/v1/admin/finance/meter-events/${outboxId}/retry`, params: { outboxId: String(outboxId) }, body, cookie });

describe("a meter event that failed for good", () => {
  it("is listed in Admin → Finance; retry and re-key put it back once each, audited; the re-keyed one reaches Stripe", async () => {
    await db.transaction((tx) => recordChunkUsage(tx, { studioId: s.studioId, sweepId, chunkIndex: 0, computeMs: 240_000, memo: "chunk 0" }));
    // Chunk 1 is the next test's failed event.
    await db.transaction((tx) => recordChunkUsage(tx, { studioId: s.studioId, sweepId, chunkIndex: 1, computeMs: 1, memo: "chunk 1" }));
    // The outbox gave up on chunk 0 (as after Stripe refused it five times).
    const row = await meterRow(0);
    await db.update(outbox).set({ status: "failed", attempts: 5, lastError: "Stripe refused the meter event: test" }).where(eq(outbox.id, row.id));

    const listed = await call(financeGet, { method: "GET", path: "/api/v1/admin/finance", cookie: adminCookie });
    expect(listed.status).toBe(200);
    const failed = (listed.body as { failedMeterEvents: Array<{ outboxId: number; identifier: string; valueMs: number; studioName: string }> }).failedMeterEvents;
    expect(failed).toEqual([expect.objectContaining({ outboxId: row.id, identifier: usageKey(sweepId, 0), valueMs: 240_000, studioName: "Quillmoss Studio" })]);

    // Bad input names the field; a studio member is not an admin.
    const short = await retry(row.id, { reason: "x" });
    expect(short.status).toBe(400);
    expect(errorOf(short.body)).toMatchObject({ field: "reason" });
    const notId = await retry("abc", { reason: "looks fixed" });
    expect(notId.status).toBe(400);
    expect(errorOf(notId.body)).toMatchObject({ field: "outboxId" });
    expect((await retry(row.id, { reason: "looks fixed" }, s.cookies.owner)).status).toBe(403);

    // Re-key, clicked twice at once: queued once, one audit row.
    const [a, b] = await Promise.all([retry(row.id, { rekey: true, reason: "identifier taken at Stripe" }), retry(row.id, { rekey: true, reason: "identifier taken at Stripe" })]);
    expect([a.status, b.status].sort()).toEqual([200, 202]);
    const queued = (a.status === 202 ? a : b).body as { state: string; meterIdentifier: string };
    expect(queued).toMatchObject({ state: "queued", meterIdentifier: `${usageKey(sweepId, 0)}~r1` });
    const audits = await db.select().from(auditLog).where(eq(auditLog.action, "meter_event.rekey"));
    expect(audits).toHaveLength(1);
    expect(audits[0]).toMatchObject({ actorLabel: adminEmail, subjectId: usageKey(sweepId, 0), reason: "identifier taken at Stripe" });
    expect((await meterRow(0)).status).toBe("pending");

    // Delivered under the new identifier (twice: Stripe counts it once).
    const dispatcher = new OutboxDispatcher({ db, handlers: { [METER_EVENT_KIND]: (r) => deliverMeterEvent(db, h.stripe, r) }, now: () => new Date(Date.now() + 60_000) });
    await dispatcher.dispatchDue();
    expect((await meterRow(0)).status).toBe("delivered");
    await deliverMeterEvent(db, h.stripe, await meterRow(0));
    const finance = await call(financeGet, { method: "GET", path: "/api/v1/admin/finance", cookie: adminCookie });
    expect((finance.body as { failedMeterEvents: unknown[] }).failedMeterEvents).toEqual([]);
    // A click after delivery changes nothing and writes no audit row.
    const late = await retry(row.id, { reason: "again" });
    expect(late.status).toBe(200);
    expect(late.body).toMatchObject({ state: "unchanged", status: "delivered" });
    expect(await db.select().from(auditLog).where(like(auditLog.action, "meter_event.%"))).toHaveLength(1);
  });
});

describe("the scheduled finance reconciliation", () => {
  it("mails admins once per distinct difference, reports 0 when all matches, and queues its next slot", async () => {
    // Nothing invoiced and nothing failed: 0 differences, nobody mailed.
    const clean = await reconcileFinance(db);
    expect(clean).toMatchObject({ differences: [], failedMeterEvents: 0, alerted: 0 });

    // A failed meter event is a difference the admins hear of — once, however many passes run.
    const row = await meterRow(1);
    await db.update(outbox).set({ status: "failed", lastError: "Stripe refused the meter event: test" }).where(eq(outbox.id, row.id));
    const first = await reconcileFinance(db);
    expect(first).toMatchObject({ failedMeterEvents: 1, alerted: 1 });
    const again = await reconcileFinance(db);
    expect(again).toMatchObject({ failedMeterEvents: 1, alerted: 0 });
    const mails = await db.select().from(outbox).where(and(eq(outbox.kind, "mail"), like(outbox.idempotencyKey, "mail:finance-difference:%")));
    expect(mails).toHaveLength(1);
    expect(mails[0].payload).toMatchObject({ to: adminEmail });
    expect((mails[0].payload as { text: string }).text).toContain("1 meter event(s) failed for good");

    // The scheduled pass queues the next slot on the outbox, once per slot.
    const now = new Date();
    await runScheduledFinanceReconcile(db, now);
    await runScheduledFinanceReconcile(db, now);
    const next = new Date((Math.floor(now.getTime() / FINANCE_RECONCILE_EVERY_MS) + 1) * FINANCE_RECONCILE_EVERY_MS);
    const slots = await db.select().from(outbox).where(eq(outbox.kind, FINANCE_RECONCILE_KIND));
    expect(slots).toHaveLength(1);
    expect(slots[0].nextAttemptAt.getTime()).toBe(next.getTime());
  });
});
