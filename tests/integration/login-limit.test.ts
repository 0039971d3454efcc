/**
 * Password sign-in through next-auth's real credentials callback: limited per account and per client
 * address (5 failures in 15 minutes lock the key for 15 minutes — common practice), always the same
 * generic message.
 */
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { LOGIN_ERROR_MESSAGE } from "@/lib/auth/accounts";
import * as meRoute from "@/app/api/v1/me/route";
import { closeTestDb, useFreshDb } from "../helpers/db";
import { makeUser, uniqueEmail } from "../helpers/factories";
import { call } from "../helpers/http";
import * as nextAuthRoute from "@/app/api/auth/[...nextauth]/route";
import { csrf, nextAuth, passwordSignIn } from "../helpers/next-auth";

beforeAll(async () => {
  await useFreshDb();
});
afterAll(async () => {
  vi.useRealTimers();
  await closeTestDb();
});

const PASSWORD = "slapshot-over-the-crates";

describe("credentials sign-in", () => {
  it("signs in with the right password and the session works on the API", async () => {
    const user = await makeUser({ password: PASSWORD });
    const result = await passwordSignIn(user.email.toUpperCase(), PASSWORD);
    expect(result.error).toBeNull();
    expect(result.ok).toBe(true);
    const me = await call(meRoute.GET, { path: "/api/v1/me", cookie: result.cookie });
    expect(me.status).toBe(200);
    expect((me.body as { user: { id: string; isAdmin: boolean } }).user).toMatchObject({ id: user.id, isAdmin: false });
    // next-auth's own session endpoint carries what the contract lists.
    const session = await nextAuth(["session"], { cookie: result.cookie });
    expect(await session.json()).toMatchObject({ user: { id: user.id, email: user.email, name: user.name, isAdmin: false } });
  });

  it("puts isAdmin in the session of a platform admin", async () => {
    const admin = await makeUser({ password: PASSWORD, isAdmin: true });
    const result = await passwordSignIn(admin.email, PASSWORD, "203.0.113.8");
    const session = await nextAuth(["session"], { cookie: result.cookie });
    expect(((await session.json()) as { user: { isAdmin: boolean } }).user.isAdmin).toBe(true);
  });

  it("gives the same generic message for a wrong password and an unknown account", async () => {
    const user = await makeUser({ password: PASSWORD });
    const wrong = await passwordSignIn(user.email, "not-the-password", "198.51.100.20");
    const unknown = await passwordSignIn(uniqueEmail("ghost"), PASSWORD, "198.51.100.21");
    expect(wrong).toMatchObject({ ok: false, error: LOGIN_ERROR_MESSAGE, status: 401 });
    expect(unknown).toMatchObject({ ok: false, error: LOGIN_ERROR_MESSAGE, status: 401 });
    expect(LOGIN_ERROR_MESSAGE).toBe("Invalid e-mail or password");
  });

  it("refuses the 6th attempt within the window even with the right password, with the same message", async () => {
    const user = await makeUser({ password: PASSWORD });
    for (let i = 1; i <= 5; i++) {
      const attempt = await passwordSignIn(user.email, `wrong-password-${i}`, "198.51.100.30");
      expect(attempt.error).toBe(LOGIN_ERROR_MESSAGE);
    }
    const sixth = await passwordSignIn(user.email, PASSWORD, "198.51.100.30");
    expect(sixth).toMatchObject({ ok: false, error: LOGIN_ERROR_MESSAGE });
    // The lock is on the account, not only the address the failures came from.
    const elsewhere = await passwordSignIn(user.email, PASSWORD, "192.0.2.99");
    expect(elsewhere).toMatchObject({ ok: false, error: LOGIN_ERROR_MESSAGE });
  });

  it("locks an address that fails across many accounts, without locking those accounts elsewhere", async () => {
    const victims = await Promise.all([1, 2, 3].map(() => makeUser({ password: PASSWORD })));
    const address = "198.51.100.40";
    for (let i = 0; i < 5; i++) await passwordSignIn(victims[i % 3].email, "guess-guess-guess", address);
    expect((await passwordSignIn(victims[0].email, PASSWORD, address)).ok).toBe(false);
    // Two failures per account is under the account limit: from another address they still sign in.
    expect((await passwordSignIn(victims[0].email, PASSWORD, "192.0.2.50")).ok).toBe(true);
  });

  it("lets the account in again once the 15-minute lock has passed", async () => {
    const user = await makeUser({ password: PASSWORD });
    // The limiter takes "now" from its caller's clock for both what it writes and what it reads, so a
    // fake clock started from the real one moves every party together; no calendar date is the subject.
    const start = new Date();
    vi.useFakeTimers({ now: start, toFake: ["Date"] });
    try {
      for (let i = 0; i < 5; i++) await passwordSignIn(user.email, "wrong-wrong-wrong", "198.51.100.60");
      vi.setSystemTime(new Date(start.getTime() + 14 * 60_000));
      expect((await passwordSignIn(user.email, PASSWORD, "198.51.100.61")).ok).toBe(false);
      vi.setSystemTime(new Date(start.getTime() + 16 * 60_000));
      expect((await passwordSignIn(user.email, PASSWORD, "198.51.100.62")).ok).toBe(true);
    } finally {
      vi.useRealTimers();
    }
  });

  it("does not count four failures followed by a success toward a lock", async () => {
    const user = await makeUser({ password: PASSWORD });
    // A range of its own: the tests above already spent failures in 198.51.100.0/24, and the range
    // limit (RANGE_LOGIN_LIMIT) would otherwise decide this test instead of the account rule.
    for (let i = 0; i < 4; i++) await passwordSignIn(user.email, "wrong-wrong-wrong", `203.0.113.${70 + i}`);
    expect((await passwordSignIn(user.email, PASSWORD, "203.0.113.80")).ok).toBe(true);
    for (let i = 0; i < 4; i++) await passwordSignIn(user.email, "wrong-wrong-wrong", `203.0.113.${90 + i}`);
    expect((await passwordSignIn(user.email, PASSWORD, "203.0.113.99")).ok).toBe(true);
  });

  it("answers 413 and 400 JSON, not 500, for an oversize or malformed sign-in body", async () => {
    const { csrfToken, cookie } = await csrf();
    const big = await nextAuth(["callback", "credentials"], {
      method: "POST",
      form: { csrfToken, email: "a@b.test", password: "p".repeat(20_000), json: "true" },
      cookie,
    });
    expect(big.status).toBe(413);
    expect(((await big.json()) as { error: { code: string } }).error.code).toBe("payload_too_large");
    const req = new Request("http://localhost:3000/api/auth/callback/credentials", {
      method: "POST",
      headers: { "content-type": "application/json", cookie },
      body: '{"csrfToken": ',
    });
    const broken = await nextAuthRoute.POST(req, { params: Promise.resolve({ nextauth: ["callback", "credentials"] }) });
    expect(broken.status).toBe(400);
    expect(((await broken.json()) as { error: { code: string } }).error.code).toBe("invalid_json");
  });
});
