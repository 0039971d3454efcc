/**
 * The admin console's API through its route handlers: quota edits, credit adjustments (idempotent,
 * in the ledger), suspension, platform roles, and the audit log (before/after values, filters, CSV,
 * append-only), including the role and token changes studio owners make.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq, sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { auditLog, ledgerEntries, outbox, users, type User } from "@/db/schema";
import { formatCompute } from "@/lib/billing/format";
import { AUDIT_CSV_COLUMNS, ensureAuditAppendOnly } from "@/lib/audit/audit";
import { balanceMs } from "@/lib/quotas/standing";
import { PLAN_DEFAULTS } from "@/lib/quotas/plan";
import { closeTestDb, useFreshDb } from "../helpers/db";
import { makeUser } from "../helpers/factories";
import { call, errorOf, sessionCookie } from "../helpers/http";
import { loadRoute } from "../helpers/routes";
import { makeSweepStudio, puckSpec, type TestStudio } from "./sweeps/support";
import { submitSweep } from "@/lib/queue/submit";

let db: Db;
let admin: User;
let adminCookie: string;
let studio: TestStudio;

beforeAll(async () => {
  db = await useFreshDb();
  await ensureAuditAppendOnly(db);
  admin = await makeUser({ name: "operator", isAdmin: true, email: "ops.console@kickdrift.test" });
  adminCookie = await sessionCookie(admin);
  studio = await makeSweepStudio("Heronsgate Games", 10 * 60_000);
});
afterAll(closeTestDb);

async function adminCall(route: string, method: string, params: Record<string, string>, body?: unknown, query = "") {
  const mod = await loadRoute(route);
  const path = `/api/${route.replace(/\[([^\]]+)\]/g, (_, k: string) => params[k])}${query}`;
  return call(mod[method], { method, path, params, body, cookie: adminCookie });
}

describe("admin console API", () => {
  it("edits quotas partially (null = plan default) and audits before and after", async () => {
    const p = { studioId: studio.studioId };
    const res = await adminCall("v1/admin/studios/[studioId]/quotas", "PATCH", p, { monthlyComputeMs: 90 * 60_000, maxRunningSweeps: 1, reason: "pilot plan" });
    expect(res.status).toBe(200);
    const { quotas } = res.body as { quotas: { overrides: Record<string, unknown>; effective: Record<string, unknown> } };
    expect(quotas.effective).toMatchObject({ monthlyComputeMs: 90 * 60_000, maxRunningSweeps: 1, maxCellsPerSweep: PLAN_DEFAULTS.maxCellsPerSweep });
    expect(quotas.overrides).toMatchObject({ monthlyComputeMs: 90 * 60_000, maxBodies: null });
    const noReason = await adminCall("v1/admin/studios/[studioId]/quotas", "PATCH", p, { maxRunningSweeps: 2 });
    expect(noReason.status).toBe(400);
    expect(errorOf(noReason.body).field).toBe("reason");
    const blankReason = await adminCall("v1/admin/studios/[studioId]/quotas", "PATCH", p, { maxRunningSweeps: 2, reason: "   " });
    expect(errorOf(blankReason.body).field).toBe("reason");
    const reset = await adminCall("v1/admin/studios/[studioId]/quotas", "PATCH", p, { maxRunningSweeps: null, reason: "back to plan" });
    expect((reset.body as { quotas: { effective: { maxRunningSweeps: number } } }).quotas.effective.maxRunningSweeps).toBe(PLAN_DEFAULTS.maxRunningSweeps);
    const rows = await db.select().from(auditLog).where(and(eq(auditLog.studioId, studio.studioId), eq(auditLog.action, "quota.update")));
    expect(rows.map((r) => [r.before, r.after, r.reason, r.actorLabel])).toEqual([
      [{ monthlyComputeMs: null, maxRunningSweeps: null }, { monthlyComputeMs: 90 * 60_000, maxRunningSweeps: 1 }, "pilot plan", admin.email],
      [{ maxRunningSweeps: 1 }, { maxRunningSweeps: null }, "back to plan", admin.email],
    ]);
    const bad = await adminCall("v1/admin/studios/[studioId]/quotas", "PATCH", p, { maxCellsPerSweep: PLAN_DEFAULTS.maxCellsPerSweep + 1, reason: "too many" });
    expect(bad.status).toBe(400);
    expect(errorOf(bad.body).field).toBe("maxCellsPerSweep");
    const missing = await adminCall("v1/admin/studios/[studioId]/quotas", "PATCH", { studioId: "std_nope" }, { maxBodies: 10, reason: "nobody" });
    expect(missing.status).toBe(404);
  });

  it("grants and revokes minutes as ledger adjustments, once per idempotency key, never below a zero balance", async () => {
    const p = { studioId: studio.studioId };
    const before = await balanceMs(db, studio.studioId);
    const body = { computeMs: 5 * 60_000, reason: "outage credit", idempotencyKey: "outage-2026-12-02" };
    const first = await adminCall("v1/admin/studios/[studioId]/adjustments", "POST", p, body);
    const retry = await adminCall("v1/admin/studios/[studioId]/adjustments", "POST", p, body);
    expect([first.status, retry.status]).toEqual([201, 200]);
    expect(await balanceMs(db, studio.studioId)).toBe(before + 5 * 60_000);
    const entries = await db.select().from(ledgerEntries).where(and(eq(ledgerEntries.studioId, studio.studioId), eq(ledgerEntries.kind, "adjustment")));
    expect(entries.filter((e) => e.memo.includes("outage credit"))).toHaveLength(1);
    const tooMuch = await adminCall("v1/admin/studios/[studioId]/adjustments", "POST", p, { computeMs: -(before + 5 * 60_000 + 1), reason: "clawback" });
    expect(tooMuch.status).toBe(422);
    expect(errorOf(tooMuch.body).field).toBe("computeMs");
    // In minutes, as the admin screen takes and shows them, never a count of milliseconds.
    const hugeMs = 999_999 * 60_000;
    const huge = await adminCall("v1/admin/studios/[studioId]/adjustments", "POST", p, { computeMs: -hugeMs, reason: "clawback" });
    expect(errorOf(huge.body).message).toBe(`computeMs: cannot revoke 999,999.00 min; the studio's balance is ${formatCompute(before + 5 * 60_000)}.`);
    const revoke = await adminCall("v1/admin/studios/[studioId]/adjustments", "POST", p, { computeMs: -60_000, reason: "duplicate grant" });
    expect(revoke.status).toBe(201);
    expect(await balanceMs(db, studio.studioId)).toBe(before + 4 * 60_000);
    const noReason = await adminCall("v1/admin/studios/[studioId]/adjustments", "POST", p, { computeMs: 1000 });
    expect(errorOf(noReason.body).field).toBe("reason");
    const audits = await db.select().from(auditLog).where(and(eq(auditLog.studioId, studio.studioId), eq(auditLog.action, "credit.adjust")));
    expect(audits.map((a) => a.reason)).toEqual(["outage credit", "duplicate grant"]);
    expect(audits[0].before).toEqual({ balanceMs: before });
    expect(audits[0].after).toEqual({ balanceMs: before + 5 * 60_000, computeMs: 5 * 60_000 });
    const list = await adminCall("v1/admin/studios/[studioId]", "GET", p);
    expect((list.body as { adjustments: { computeMs: number }[] }).adjustments.map((a) => a.computeMs).slice(0, 2)).toEqual([-60_000, 5 * 60_000]);
  });

  it("suspends and reinstates a studio with a reason; the studio list shows status, usage against cap and balance", async () => {
    const p = { studioId: studio.studioId };
    expect((await adminCall("v1/admin/studios/[studioId]/status", "PUT", p, { status: "suspended", reason: "chargeback" })).status).toBe(200);
    const listed = (await adminCall("v1/admin/studios", "GET", {})).body as { studios: { id: string; status: string; monthlyComputeMs: number; balanceMs: number; monthUsedMs: number }[] };
    const mine = listed.studios.find((s) => s.id === studio.studioId)!;
    expect(mine).toMatchObject({ status: "suspended", monthlyComputeMs: 90 * 60_000, monthUsedMs: 0, balanceMs: await balanceMs(db, studio.studioId) });
    // Every member hears of it by e-mail through the outbox, with the reason; their studio page carries it too.
    const mailTo = async (subject: string) =>
      (await db.select().from(outbox).where(and(eq(outbox.studioId, studio.studioId), eq(outbox.kind, "mail"))))
        .map((row) => row.payload as { to: string; subject: string; text: string })
        .filter((mail) => mail.subject === subject);
    const suspendedMails = await mailTo("Heronsgate Games is suspended on Kickdrift");
    expect(suspendedMails.map((mail) => mail.to).sort()).toEqual([studio.owner.email, studio.engineer.email, studio.finance.email].sort());
    expect(suspendedMails[0].text).toContain("Reason: chargeback");
    const seen = await call((await loadRoute("v1/studios/[studioId]")).GET, { path: `/api/v1/studios/${studio.studioId}`, params: p, cookie: studio.cookies.engineer });
    expect((seen.body as { suspension: { reason: string; since: string } | null }).suspension).toMatchObject({ reason: "chargeback" });
    // Suspending again changes nothing and mails no one twice.
    expect((await adminCall("v1/admin/studios/[studioId]/status", "PUT", p, { status: "suspended", reason: "again" })).status).toBe(200);
    expect(await mailTo("Heronsgate Games is suspended on Kickdrift")).toHaveLength(3);
    expect((await adminCall("v1/admin/studios/[studioId]/status", "PUT", p, { status: "active", reason: "paid" })).status).toBe(200);
    expect(await mailTo("Heronsgate Games is active again on Kickdrift")).toHaveLength(3);
    const after = await call((await loadRoute("v1/studios/[studioId]")).GET, { path: `/api/v1/studios/${studio.studioId}`, params: p, cookie: studio.cookies.engineer });
    expect((after.body as { suspension: unknown }).suspension).toBeNull();
    const audits = await db.select().from(auditLog).where(and(eq(auditLog.studioId, studio.studioId), sql`${auditLog.action} like 'studio.%'`));
    expect(audits.map((a) => [a.action, a.before, a.after, a.reason])).toEqual([
      ["studio.suspend", { status: "active" }, { status: "suspended" }, "chargeback"],
      ["studio.reinstate", { status: "suspended" }, { status: "active" }, "paid"],
    ]);
  });

  it("audits role changes and token creation and revocation by the studio owner", async () => {
    const p = { studioId: studio.studioId };
    const roleChange = await call((await loadRoute("v1/studios/[studioId]/members/[userId]")).PATCH, {
      method: "PATCH",
      path: `/api/v1/studios/${studio.studioId}/members/${studio.engineer.id}`,
      params: { ...p, userId: studio.engineer.id },
      body: { role: "finance" },
      cookie: studio.cookies.owner,
    });
    expect(roleChange.status).toBe(200);
    const created = await call((await loadRoute("v1/studios/[studioId]/tokens")).POST, {
      method: "POST",
      path: `/api/v1/studios/${studio.studioId}/tokens`,
      params: p,
      body: { name: "build farm", scopes: ["read"] },
      cookie: studio.cookies.owner,
    });
    const { token, secret } = created.body as { token: { id: string }; secret: string };
    await call((await loadRoute("v1/studios/[studioId]/tokens/[tokenId]")).DELETE, {
      method: "DELETE",
      path: `/api/v1/studios/${studio.studioId}/tokens/${token.id}`,
      params: { ...p, tokenId: token.id },
      cookie: studio.cookies.owner,
    });
    const res = await adminCall("v1/admin/audit", "GET", {}, undefined, `?studioId=${studio.studioId}&actor=${encodeURIComponent(studio.owner.email)}`);
    const entries = (res.body as { entries: { action: string; before: unknown; after: unknown; subjectId: string }[] }).entries;
    expect(entries.map((e) => e.action)).toEqual(["token.revoke", "token.create", "member.role_change"]);
    expect(entries[2]).toMatchObject({ subjectId: studio.engineer.id, before: { role: "engineer" }, after: { role: "finance" } });
    expect(entries[1].after).toMatchObject({ name: "build farm", scopes: ["read"] });
    expect(JSON.stringify(entries)).not.toContain(secret);
  });

  it("changes platform roles (audited) but an admin cannot drop their own", async () => {
    const person = await makeUser({ name: "future operator" });
    const res = await adminCall("v1/admin/users/[userId]", "PATCH", { userId: person.id }, { isAdmin: true, reason: "on-call rota" });
    expect(res.status).toBe(200);
    expect((await db.select().from(users).where(eq(users.id, person.id)))[0].isAdmin).toBe(true);
    const noReason = await adminCall("v1/admin/users/[userId]", "PATCH", { userId: person.id }, { isAdmin: false });
    expect(noReason.status).toBe(400);
    expect(errorOf(noReason.body).field).toBe("reason");
    const self = await adminCall("v1/admin/users/[userId]", "PATCH", { userId: admin.id }, { isAdmin: false, reason: "leaving" });
    expect(self.status).toBe(409);
    const [entry] = await db.select().from(auditLog).where(and(eq(auditLog.action, "user.platform_role"), eq(auditLog.subjectId, person.id)));
    expect([entry.before, entry.after]).toEqual([{ isAdmin: false }, { isAdmin: true }]);
  });

  it("filters the audit log, exports it as CSV, and the database refuses to change or delete its rows", async () => {
    const onlyAdjust = await adminCall("v1/admin/audit", "GET", {}, undefined, "?action=credit.adjust");
    expect((onlyAdjust.body as { entries: { action: string }[] }).entries.every((e) => e.action === "credit.adjust")).toBe(true);
    const future = await adminCall("v1/admin/audit", "GET", {}, undefined, "?from=2999-01-01");
    expect((future.body as { entries: unknown[] }).entries).toEqual([]);
    const badAction = await adminCall("v1/admin/audit", "GET", {}, undefined, "?action=launch.crates");
    expect(badAction.status).toBe(400);
    expect(errorOf(badAction.body).field).toBe("action");

    const csv = await adminCall("v1/admin/audit", "GET", {}, undefined, `?studioId=${studio.studioId}&format=csv`);
    expect(csv.status).toBe(200);
    expect(csv.res.headers.get("content-type")).toContain("text/csv");
    const text = csv.body as string;
    const lines = text.trimEnd().split("\r\n");
    expect(lines[0]).toBe(AUDIT_CSV_COLUMNS.join(","));
    // JSON values are quoted with doubled quotes (RFC 4180).
    expect(text).toContain('"{""status"":""active""}"');
    const total = (await db.select().from(auditLog).where(eq(auditLog.studioId, studio.studioId))).length;
    expect(lines).toHaveLength(total + 1);

    // Drizzle wraps the database's error; the trigger's message is in its cause.
    const refusal = (error: unknown) => String((error as { cause?: Error }).cause?.message ?? error);
    expect(refusal(await db.execute(sql`update audit_log set reason = 'rewritten'`).catch((e: unknown) => e))).toMatch(/append-only/);
    expect(refusal(await db.execute(sql`delete from audit_log`).catch((e: unknown) => e))).toMatch(/append-only/);
    expect((await db.select().from(auditLog).where(eq(auditLog.reason, "rewritten")))).toEqual([]);
  });

  it("the queue view lists unfinished sweeps with their studio", async () => {
    const sweep = await submitSweep(db, studio.studioId, { spec: puckSpec() });
    const res = await adminCall("v1/admin/queue", "GET", {});
    expect(res.status).toBe(200);
    expect((res.body as { sweeps: unknown[] }).sweeps).toContainEqual(
      expect.objectContaining({ sweepId: sweep.id, studioName: "Heronsgate Games", status: "queued", chunks: sweep.chunks, chunksDone: 0, chunksRunning: 0 }),
    );
  });
});
