/**
 * Sessions that must stop working: after a password reset, and on an account registered with a
 * password by someone who never proved the mailbox once its owner signs in by e-mailed link.
 */
import { eq } from "drizzle-orm";
import { describe, expect, it, vi } from "vitest";
import type { Db } from "@/db/client";
import { users } from "@/db/schema";
import * as signupRoute from "@/app/api/v1/signup/route";
import * as meRoute from "@/app/api/v1/me/route";
import * as confirmRoute from "@/app/api/v1/password-reset/confirm/route";
import { makePasswordReset, makeUser, uniqueEmail } from "../helpers/factories";
import { call } from "../helpers/http";
import { withFreshDbAndMailFake } from "../helpers/mail";
import { magicLinkSignIn, passwordSignIn } from "../helpers/next-auth";

let db: Db;
withFreshDbAndMailFake((fresh) => (db = fresh), () => vi.useRealTimers());

const me = (cookie: string) => call(meRoute.GET, { path: "/api/v1/me", cookie });

/** Runs `fn` with the clock set a few minutes back, so sessions minted inside are clearly older. */
async function minutesAgo<T>(minutes: number, fn: () => Promise<T>): Promise<T> {
  vi.useFakeTimers({ now: Date.now() - minutes * 60_000, toFake: ["Date"] });
  try {
    return await fn();
  } finally {
    vi.useRealTimers();
  }
}

describe("a pre-registered account", () => {
  it("loses the squatter's password and sessions when the mailbox owner first signs in by link", async () => {
    const victim = uniqueEmail("victim");
    const squatter = await minutesAgo(5, async () => {
      const signup = await call(signupRoute.POST, { method: "POST", path: "/api/v1/signup", body: { email: victim, password: "squatters-password", name: "Not Them" } });
      expect(signup.status).toBe(202);
      return passwordSignIn(victim, "squatters-password", "198.51.100.200");
    });
    expect(squatter.ok).toBe(true);
    expect((await me(squatter.cookie)).status).toBe(200);

    const owner = await magicLinkSignIn(victim);
    expect((await me(owner.jar)).status).toBe(200);

    expect((await me(squatter.cookie)).status).toBe(401);
    expect((await passwordSignIn(victim, "squatters-password", "198.51.100.201")).ok).toBe(false);
    const [row] = await db.select().from(users).where(eq(users.email, victim));
    expect(row.passwordHash).toBeNull();
    expect(row.emailVerified).not.toBeNull();
  });

  it("keeps the password of an account whose address was already proven", async () => {
    const email = uniqueEmail("proven");
    const user = await makeUser({ email, password: "my-own-long-password" });
    await db.update(users).set({ emailVerified: new Date() }).where(eq(users.id, user.id));
    const earlier = await minutesAgo(5, () => passwordSignIn(email, "my-own-long-password", "198.51.100.210"));
    await magicLinkSignIn(email);
    expect((await me(earlier.cookie)).status).toBe(200);
    expect((await passwordSignIn(email, "my-own-long-password", "198.51.100.211")).ok).toBe(true);
  });
});

describe("a password reset", () => {
  it("signs out earlier sessions; a sign-in with the new password works", async () => {
    const user = await makeUser({ password: "before-the-reset-pw" });
    const old = await minutesAgo(5, () => passwordSignIn(user.email, "before-the-reset-pw", "198.51.100.220"));
    expect((await me(old.cookie)).status).toBe(200);
    const secret = await makePasswordReset(user.id);
    const res = await call(confirmRoute.POST, { method: "POST", path: "/x", body: { token: secret, password: "after-the-reset-pw" } });
    expect(res.status).toBe(200);
    expect((await me(old.cookie)).status).toBe(401);
    const fresh = await passwordSignIn(user.email, "after-the-reset-pw", "198.51.100.221");
    expect((await me(fresh.cookie)).status).toBe(200);
  });
});
