/**
 * Issue #19: the grace-period rule is evaluated in two places — the run limits' one standing query
 * (lib/quotas/enforce.ts, which pauses sweeps and stops overage) and overageHold (the Billing page and
 * chunk debits, lib/billing/overdue.ts). Both use lib/billing/grace.ts's SQL; here they must agree at
 * every edge: a second before the due date plus the grace period, at it, and for invoices that do not
 * hold (paid, void, $0, no due date).
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import type { Db } from "@/db/client";
import { invoices } from "@/db/schema";
import { databaseNow, OVERDUE_GRACE_DAYS, overageHold } from "@/lib/billing/overdue";
import { studioStanding } from "@/lib/quotas/enforce";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { makeSweepStudio } from "../sweeps/support";
import { allowOverage } from "./support";

let db: Db;
beforeAll(async () => {
  db = await useFreshDb();
});
afterAll(async () => {
  await closeTestDb();
});

const DAY_MS = 86_400_000;

async function bothSay(studioId: string, at: Date): Promise<{ hold: boolean; limits: boolean }> {
  const hold = (await overageHold(db, studioId, at)).suspended;
  const limits = !(await studioStanding(db, studioId, at)).quotas.overageAllowed;
  return { hold, limits };
}

describe("one grace-period rule for the run limits and the Billing page", () => {
  it("both hold overage off from due date + OVERDUE_GRACE_DAYS exactly, and only for an owed invoice above $0", async () => {
    const s = await makeSweepStudio("Curlew Flats Games", 0);
    await allowOverage(db, s.studioId);
    // Dates from the database's clock (any day the test runs); the invoice fell due 10 days ago.
    const now = await databaseNow(db);
    const dueAt = new Date(Math.floor((now.getTime() - 10 * DAY_MS) / 1000) * 1000);
    const offAt = new Date(dueAt.getTime() + OVERDUE_GRACE_DAYS * DAY_MS);
    const base = { studioId: s.studioId, currency: "usd", periodStart: new Date(dueAt.getTime() - 40 * DAY_MS), periodEnd: new Date(dueAt.getTime() - 30 * DAY_MS), dueAt };
    await db.insert(invoices).values([
      { id: "in_grace_owed", status: "open", totalCents: 90, ...base },
      // None of these holds overage: paid, void, a $0 invoice, and one without a due date.
      { id: "in_grace_paid", status: "paid", totalCents: 90, ...base },
      { id: "in_grace_void", status: "void", totalCents: 90, ...base },
      { id: "in_grace_zero", status: "open", totalCents: 0, ...base },
      { id: "in_grace_nodue", status: "uncollectible", totalCents: 90, ...base, dueAt: null },
    ]);

    expect(await bothSay(s.studioId, new Date(offAt.getTime() - 1000))).toEqual({ hold: false, limits: false });
    expect(await bothSay(s.studioId, offAt)).toEqual({ hold: true, limits: true });
    const hold = await overageHold(db, s.studioId, offAt);
    expect(hold.unpaid.map((u) => [u.id, u.overageOffAt, u.overdue, u.overageOff])).toEqual([["in_grace_owed", offAt.toISOString(), true, true]]);

    // Uncollectible still holds; paying it lifts the hold on both paths.
    await db.update(invoices).set({ status: "uncollectible" }).where(eq(invoices.id, "in_grace_owed"));
    expect(await bothSay(s.studioId, offAt)).toEqual({ hold: true, limits: true });
    await db.update(invoices).set({ status: "paid" }).where(eq(invoices.id, "in_grace_owed"));
    expect(await bothSay(s.studioId, offAt)).toEqual({ hold: false, limits: false });
    // With no `at`, both read the database's clock: the grace period has 4 days left, nothing holds.
    await db.update(invoices).set({ status: "open" }).where(eq(invoices.id, "in_grace_owed"));
    expect((await overageHold(db, s.studioId)).suspended).toBe(false);
    expect((await studioStanding(db, s.studioId)).quotas.overageAllowed).toBe(true);

    // Stripe's overdue notice (invoice.overdue, recorded as overdue_notice_at) starts the hold on both
    // paths from its arrival, though the database's clock has 4 days of grace left; the off-time shown
    // is the notice's. Before the notice, nothing holds; paying lifts it on both.
    const noticeAt = new Date(Math.floor(now.getTime() / 1000) * 1000);
    await db.update(invoices).set({ overdueNoticeAt: noticeAt }).where(eq(invoices.id, "in_grace_owed"));
    expect(await bothSay(s.studioId, new Date(noticeAt.getTime() - 1000))).toEqual({ hold: false, limits: false });
    expect(await bothSay(s.studioId, noticeAt)).toEqual({ hold: true, limits: true });
    expect((await overageHold(db, s.studioId)).suspended).toBe(true);
    expect((await studioStanding(db, s.studioId)).quotas.overageAllowed).toBe(false);
    expect((await overageHold(db, s.studioId, noticeAt)).unpaid.map((u) => [u.id, u.overageOffAt, u.overageOff])).toEqual([["in_grace_owed", noticeAt.toISOString(), true]]);
    // A notice on a paid invoice holds nothing.
    await db.update(invoices).set({ status: "paid" }).where(eq(invoices.id, "in_grace_owed"));
    expect(await bothSay(s.studioId, noticeAt)).toEqual({ hold: false, limits: false });
    expect((await overageHold(db, s.studioId)).suspended).toBe(false);
  });
});
