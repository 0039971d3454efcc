/** Password reset by mailed link: 202 always, the link expires after 1 hour and works once. */
import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import type { Db } from "@/db/client";
import { mailMessages, passwordResets, users } from "@/db/schema";
import { settleAfterResponse } from "@/lib/api/after-response";
import * as resetRoute from "@/app/api/v1/password-reset/route";
import * as confirmRoute from "@/app/api/v1/password-reset/confirm/route";
import { countRows, TEST_BASE_URL } from "../helpers/db";
import { makeUser, uniqueEmail } from "../helpers/factories";
import { call, errorOf } from "../helpers/http";
import { withFreshDbAndMailFake } from "../helpers/mail";
import { passwordSignIn } from "../helpers/next-auth";

let db: Db;
withFreshDbAndMailFake((fresh) => (db = fresh));

const OLD = "old-password-of-the-puck";
const NEW = "new-password-for-crates";

/** Asks for a reset and waits for the work done after the answer (lookup and mail, issue 18). */
async function requestReset(email: string) {
  const res = await call(resetRoute.POST, { method: "POST", path: "/api/v1/password-reset", body: { email } });
  await settleAfterResponse();
  return res;
}

async function tokenFromMail(email: string): Promise<string> {
  const rows = await db.select().from(mailMessages).where(eq(mailMessages.toAddresses, email));
  const link = rows.at(-1)!.links.find((l) => l.startsWith(`${TEST_BASE_URL}/reset/`))!;
  return decodeURIComponent(link.slice(`${TEST_BASE_URL}/reset/`.length));
}

const confirm = (token: string, password: string) =>
  call(confirmRoute.POST, { method: "POST", path: "/api/v1/password-reset/confirm", body: { token, password } });

describe("password reset", () => {
  it("answers 202 for an unknown address and sends nothing", async () => {
    const before = await countRows(db, mailMessages);
    const res = await requestReset(uniqueEmail("nobody"));
    expect(res.status).toBe(202);
    expect(await countRows(db, mailMessages)).toBe(before);
  });

  it("sets a new password once; the same link then answers 410", async () => {
    const user = await makeUser({ password: OLD });
    const res = await requestReset(user.email.toUpperCase());
    expect(res.status).toBe(202);
    const token = await tokenFromMail(user.email);
    const [row] = await db.select().from(passwordResets).where(eq(passwordResets.userId, user.id));
    expect(row.tokenHash).toMatch(/^[0-9a-f]{64}$/);
    expect(row.tokenHash).not.toBe(token);
    const hourMs = row.expiresAt.getTime() - row.createdAt.getTime();
    expect(Math.abs(hourMs - 3600_000)).toBeLessThan(5_000);

    const ok = await confirm(token, NEW);
    expect(ok.status).toBe(200);
    expect((await passwordSignIn(user.email, NEW, "203.0.113.10")).ok).toBe(true);
    expect((await passwordSignIn(user.email, OLD, "203.0.113.11")).ok).toBe(false);

    const reused = await confirm(token, "yet-another-password");
    expect(reused.status).toBe(410);
    expect(errorOf(reused.body)).toMatchObject({ code: "reset_token_used", field: "token" });
    expect((await passwordSignIn(user.email, NEW, "203.0.113.12")).ok).toBe(true);
  });

  it("answers 410 once the link is older than an hour and leaves the password unchanged", async () => {
    const user = await makeUser({ password: OLD });
    await requestReset(user.email);
    const token = await tokenFromMail(user.email);
    await db.update(passwordResets).set({ expiresAt: new Date(Date.now() - 1) }).where(eq(passwordResets.userId, user.id));
    const [before] = await db.select({ hash: users.passwordHash }).from(users).where(eq(users.id, user.id));
    const res = await confirm(token, NEW);
    expect(res.status).toBe(410);
    expect(errorOf(res.body).code).toBe("reset_token_expired");
    const [after] = await db.select({ hash: users.passwordHash }).from(users).where(eq(users.id, user.id));
    expect(after.hash).toBe(before.hash);
  });

  it("refuses an unknown token (400, field token) and a short new password (400, field password)", async () => {
    const unknown = await confirm("not-a-real-token", NEW);
    expect(unknown.status).toBe(400);
    expect(errorOf(unknown.body)).toMatchObject({ code: "reset_token_invalid", field: "token" });
    const user = await makeUser({ password: OLD });
    await requestReset(user.email);
    const token = await tokenFromMail(user.email);
    const short = await confirm(token, "short");
    expect(short.status).toBe(400);
    expect(errorOf(short.body).field).toBe("password");
    // The refused attempt did not spend the link.
    expect((await confirm(token, NEW)).status).toBe(200);
  });

  it("using one link spends the account's other open links", async () => {
    const user = await makeUser({ password: OLD });
    await requestReset(user.email);
    const first = await tokenFromMail(user.email);
    await requestReset(user.email);
    const second = await tokenFromMail(user.email);
    expect(second).not.toBe(first);
    expect((await confirm(second, NEW)).status).toBe(200);
    expect((await confirm(first, "other-long-password")).status).toBe(410);
  });
});
