/**
 * Issue #19: the owner's overage switch. A platform admin permits overage (the ceiling); within it the
 * owner turns it on or off. On makes the overage subscription (the admin path's outbox row, once per
 * studio); off stops new overage at the next chunk; the same value again changes nothing; each change
 * is audited; engineers, finance and API tokens get 403; on without the admin's permission is a 409
 * naming the field.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, asc, eq } from "drizzle-orm";
import { getDb, type Db } from "@/db/client";
import { auditLog, outbox, studioBilling } from "@/db/schema";
import { createApiToken } from "@/lib/auth/api-tokens";
import { createOverageSubscription } from "@/lib/billing/meter";
import { OVERAGE_SUBSCRIPTION_KIND } from "@/lib/billing/usage";
import { OutboxDispatcher } from "@/lib/outbox/outbox";
import { updateQuotas } from "@/lib/quotas/admin";
import { effectiveQuotas } from "@/lib/quotas/plan";
import { studioStanding } from "@/lib/quotas/enforce";
import { overageHeadroomMs } from "@/lib/quotas/standing";
import { PUT as overagePut } from "@/app/api/v1/studios/[studioId]/billing/overage/route";
import { GET as summaryGet } from "@/app/api/v1/studios/[studioId]/billing/route";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { call, errorOf } from "../../helpers/http";
import { makeSweepStudio, type TestStudio } from "../sweeps/support";
import { startBillingHarness, type BillingHarness } from "./support";

let h: BillingHarness;
let db: Db;
let s: TestStudio;
const admin = () => ({ id: s.owner.id, email: "admin@kickdrift.test" });

beforeAll(async () => {
  await useFreshDb();
  db = await getDb();
  h = await startBillingHarness();
  s = await makeSweepStudio("Plover Bank Games", 0);
});
afterAll(async () => {
  await h.close();
  await closeTestDb();
});

const put = (body: unknown, who: { cookie?: string; bearer?: string }) =>
  call(overagePut, { method: "PUT", path: `/api/v1/studios/${s.studioId}/billing/overage`, params: { studioId: s.studioId }, body, ...who });
const audits = async () => db.select().from(auditLog).where(and(eq(auditLog.studioId, s.studioId), eq(auditLog.action, "overage.switch"))).orderBy(asc(auditLog.id));
const queuedSubscriptions = async () => db.select().from(outbox).where(and(eq(outbox.studioId, s.studioId), eq(outbox.kind, OVERAGE_SUBSCRIPTION_KIND)));

describe("the owner's overage switch", () => {
  it("refuses others (403), a bad body (400 naming overageOn) and on without the admin's permission (409 naming overageOn)", async () => {
    const { secret } = await createApiToken(s.studioId, s.owner, { name: "ci", scopes: ["read", "write"] });
    for (const who of [{ cookie: s.cookies.engineer }, { cookie: s.cookies.finance }, { bearer: secret }]) {
      const refused = await put({ overageOn: false }, who);
      expect(refused.status, JSON.stringify(refused.body)).toBe(403);
    }
    const bad = await put({ overageOn: "yes" }, { cookie: s.cookies.owner });
    expect(bad.status).toBe(400);
    expect(errorOf(bad.body).field).toBe("overageOn");
    const unknown = await put({ overageOn: true, capMs: 5 }, { cookie: s.cookies.owner });
    expect(unknown.status).toBe(400);

    const notPermitted = await put({ overageOn: true }, { cookie: s.cookies.owner });
    expect(notPermitted.status).toBe(409);
    expect(errorOf(notPermitted.body)).toMatchObject({ code: "invalid_state", field: "overageOn" });
    expect(errorOf(notPermitted.body).message).toContain("overageAllowed");
    expect(await audits()).toHaveLength(0);
    expect(await queuedSubscriptions()).toHaveLength(0);
  });

  it("off while the admin permits: no subscription until the owner turns it on; on makes it once; off stops overage; repeats change nothing", async () => {
    // The owner switches off first; then the admin permits overage: nothing is queued while the owner has it off.
    const off = await put({ overageOn: false }, { cookie: s.cookies.owner });
    expect(off.status, JSON.stringify(off.body)).toBe(200);
    expect(off.body).toMatchObject({ permitted: false, on: false, allowed: false });
    await updateQuotas(db, admin(), s.studioId, { overageAllowed: true, reason: "studio asked for overage" });
    expect(await queuedSubscriptions()).toHaveLength(0);
    expect((await effectiveQuotas(db, s.studioId)).overageAllowed).toBe(false);

    // On: the admin path's outbox row, made into the subscription by ensureOverageSubscription.
    const on = await put({ overageOn: true }, { cookie: s.cookies.owner });
    expect(on.status, JSON.stringify(on.body)).toBe(200);
    expect(on.body).toMatchObject({ permitted: true, on: true, allowed: true, held: false });
    expect(await queuedSubscriptions()).toHaveLength(1);
    await new OutboxDispatcher({ db, handlers: { [OVERAGE_SUBSCRIPTION_KIND]: ((row: never) => createOverageSubscription(db, h.stripe, row)) as never } }).dispatchDue();
    const [account] = await db.select().from(studioBilling).where(eq(studioBilling.studioId, s.studioId));
    expect(account.stripeSubscriptionId).toMatch(/^sub_/);
    expect((await effectiveQuotas(db, s.studioId)).overageAllowed).toBe(true);
    const standingOn = await studioStanding(db, s.studioId);
    expect(overageHeadroomMs(standingOn!)).toBeGreaterThan(0);

    // On again (a retried request): nothing new — no audit row, no second subscription.
    expect((await put({ overageOn: true }, { cookie: s.cookies.owner })).status).toBe(200);
    // Off: the run limits read no headroom past the balance, so the next chunk accrues no overage.
    const offAgain = await put({ overageOn: false }, { cookie: s.cookies.owner });
    expect(offAgain.body).toMatchObject({ permitted: true, on: false, allowed: false });
    expect(overageHeadroomMs((await studioStanding(db, s.studioId))!)).toBe(0);
    expect((await effectiveQuotas(db, s.studioId)).overageAllowed).toBe(false);
    expect((await put({ overageOn: false }, { cookie: s.cookies.owner })).status).toBe(200);
    // Toggling on again queues nothing new: the subscription exists.
    expect((await put({ overageOn: true }, { cookie: s.cookies.owner })).status).toBe(200);
    expect(await queuedSubscriptions()).toHaveLength(1);

    const rows = await audits();
    expect(rows.map((r) => [r.before, r.after])).toEqual([
      [{ overageOn: true }, { overageOn: false }],
      [{ overageOn: false }, { overageOn: true }],
      [{ overageOn: true }, { overageOn: false }],
      [{ overageOn: false }, { overageOn: true }],
    ]);

    // The Billing summary says what the owner and the admin each set.
    const summary = await call(summaryGet, { method: "GET", path: `/api/v1/studios/${s.studioId}/billing`, params: { studioId: s.studioId }, cookie: s.cookies.finance });
    expect((summary.body as { overage: Record<string, unknown> }).overage).toMatchObject({ permitted: true, on: true, allowed: true });
  });
});
