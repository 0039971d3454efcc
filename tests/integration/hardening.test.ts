/**
 * Issue 18 against the route handlers: cross-origin writes and non-JSON bodies refused, deep
 * bodies refused without stalling, the sign-in limit not fooled by X-Forwarded-For, enumeration
 * closed, sessions revocable, mail and Checkout rate-limited, owner-only lists, names checked.
 */
import { and, eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import type { Db } from "@/db/client";
import { apiTokens, invites, mailMessages, passwordResets, studios, userSessions, users } from "@/db/schema";
import { holdAfterResponse, settleAfterResponse } from "@/lib/api/after-response";
import { MAX_JSON_DEPTH } from "@/lib/api/body";
import { LOGIN_ERROR_MESSAGE } from "@/lib/auth/accounts";
import { PEER_HEADER } from "@/lib/auth/limiter";
import { consumeRateLimit, RATE_LIMITS } from "@/lib/auth/rate-limits";
import { installPeerAddressStamp } from "@/lib/ops/peer-address";
import * as signupRoute from "@/app/api/v1/signup/route";
import * as resetRoute from "@/app/api/v1/password-reset/route";
import * as meRoute from "@/app/api/v1/me/route";
import * as sessionsRoute from "@/app/api/v1/me/sessions/route";
import * as studiosRoute from "@/app/api/v1/studios/route";
import * as invitesRoute from "@/app/api/v1/studios/[studioId]/invites/route";
import * as tokensRoute from "@/app/api/v1/studios/[studioId]/tokens/route";
import * as memberRoute from "@/app/api/v1/studios/[studioId]/members/[userId]/route";
import * as quotesRoute from "@/app/api/v1/studios/[studioId]/quotes/route";
import * as healthRoute from "@/app/api/health/route";
import { TEST_BASE_URL } from "../helpers/db";
import { makeStudio, makeToken, makeUser, uniqueEmail } from "../helpers/factories";
import { call, errorOf, sessionCookie } from "../helpers/http";
import { withFreshDbAndMailFake } from "../helpers/mail";
import { csrf, latestCapturedMailTo, nextAuth, passwordSignIn } from "../helpers/next-auth";
import { puckSpec } from "./sweeps/support";

let db: Db;
withFreshDbAndMailFake((fresh) => (db = fresh), settleAfterResponse);

const me = (cookie: string) => call(meRoute.GET, { path: "/api/v1/me", cookie });
const mailsTo = async (email: string) => (await db.select().from(mailMessages)).filter((m) => m.toAddresses.includes(email));

describe("2. state-changing requests with the session cookie must come from our own origin, as JSON", () => {
  it("refuses a studio created from another origin (another port of the same host), and writes nothing", async () => {
    const user = await makeUser();
    const cookie = await sessionCookie(user);
    const res = await call(studiosRoute.POST, { method: "POST", path: "/api/v1/studios", body: { name: "Evil Port Studio" }, cookie, headers: { origin: "http://localhost:3001" } });
    expect(res.status).toBe(403);
    expect(errorOf(res.body)).toMatchObject({ code: "cross_origin", field: "origin" });
    expect(await db.select().from(studios).where(eq(studios.name, "Evil Port Studio"))).toHaveLength(0);
  });

  it("refuses an owner invite from another origin", async () => {
    const owner = await makeUser();
    const studioId = await makeStudio("Gull Reef Games", [{ user: owner, role: "owner" }]);
    const cookie = await sessionCookie(owner);
    const invitee = uniqueEmail("mallory");
    const res = await call(invitesRoute.POST, { method: "POST", path: `/api/v1/studios/${studioId}/invites`, params: { studioId }, body: { email: invitee, role: "owner" }, cookie, headers: { origin: "http://evil.example" } });
    expect(res.status).toBe(403);
    expect(await db.select().from(invites).where(eq(invites.email, invitee))).toHaveLength(0);
  });

  it("refuses a write with neither Origin nor Sec-Fetch-Site: same-origin, and accepts Sec-Fetch-Site alone", async () => {
    const cookie = await sessionCookie(await makeUser());
    const bare = await call(studiosRoute.POST, { method: "POST", path: "/api/v1/studios", body: { name: "No Origin Studio" }, cookie, headers: { origin: "" } });
    // An empty Origin is not ours either.
    expect(bare.status).toBe(403);
    const req = new Request(`${TEST_BASE_URL}/api/v1/studios`, { method: "POST", headers: { cookie, "content-type": "application/json", "sec-fetch-site": "same-origin" }, body: JSON.stringify({ name: "Fetch Site Studio" }) });
    const viaFetchSite = await studiosRoute.POST(req, { params: Promise.resolve({}) });
    expect(viaFetchSite.status).toBe(201);
    const crossSite = new Request(`${TEST_BASE_URL}/api/v1/studios`, { method: "POST", headers: { cookie, "content-type": "application/json", "sec-fetch-site": "same-site" }, body: JSON.stringify({ name: "Same Site Studio" }) });
    expect((await studiosRoute.POST(crossSite, { params: Promise.resolve({}) })).status).toBe(403);
  });

  it.each(["text/plain", "application/x-www-form-urlencoded", "multipart/form-data; boundary=x", ""])("answers 415 to a JSON route sent as %j, naming content-type", async (type) => {
    const cookie = await sessionCookie(await makeUser());
    const res = await call(studiosRoute.POST, { method: "POST", path: "/api/v1/studios", body: JSON.stringify({ name: "Plain Text Studio" }), cookie, headers: { "content-type": type } });
    expect(res.status).toBe(415);
    expect(errorOf(res.body)).toMatchObject({ code: "unsupported_media_type", field: "content-type" });
  });

  it("leaves API-token calls alone: no Origin, any content type", async () => {
    const owner = await makeUser();
    const studioId = await makeStudio("Token Bay Games", [{ user: owner, role: "owner" }]);
    const { secret } = await makeToken(studioId, ["write"]);
    const req = new Request(`${TEST_BASE_URL}/api/v1/studios/${studioId}/quotes`, { method: "POST", headers: { authorization: `Bearer ${secret}`, "content-type": "text/plain" }, body: JSON.stringify({ spec: puckSpec() }) });
    const res = await quotesRoute.POST(req, { params: Promise.resolve({ studioId }) });
    expect(res.status).toBe(200);
  });
});

describe("3. a deeply nested body is refused at once and the server keeps answering", () => {
  it("answers 400 payload_too_deep to 8 parallel 8,000-deep signups while the health check answers 200", async () => {
    const deep = `{"email":${"[".repeat(8000)}${"]".repeat(8000)}}`;
    const posts = Array.from({ length: 8 }, () => call(signupRoute.POST, { method: "POST", path: "/api/v1/signup", body: deep }));
    const health = call(healthRoute.GET, { path: "/api/health" });
    const answers = await Promise.all(posts);
    for (const res of answers) {
      expect(res.status).toBe(400);
      expect(errorOf(res.body).code).toBe("payload_too_deep");
      expect(errorOf(res.body).message).toContain(`${MAX_JSON_DEPTH} levels`);
    }
    expect((await health).status).toBe(200);
  });

  it("answers 422 naming the field for a lone surrogate in a studio name (never stored as U+FFFD)", async () => {
    const cookie = await sessionCookie(await makeUser());
    const res = await call(studiosRoute.POST, { method: "POST", path: "/api/v1/studios", body: '{"name":"Half \\ud83d Studio"}', cookie });
    expect(res.status).toBe(422);
    expect(errorOf(res.body)).toMatchObject({ code: "invalid_text", field: "name" });
  });
});

describe("4. the sign-in limit is not fooled by X-Forwarded-For", () => {
  it("after 5 failures from one peer, a new first X-Forwarded-For hop does not get another try", async () => {
    installPeerAddressStamp();
    const email = uniqueEmail("sprayed");
    await makeUser({ email, password: "the-right-password" });
    const attempt = async (password: string, i: number) => {
      const { csrfToken, cookie } = await csrf();
      const res = await nextAuth(["callback", "credentials"], {
        method: "POST",
        form: { csrfToken, email: uniqueEmail("other"), password, json: "true", callbackUrl: `${TEST_BASE_URL}/studios` },
        cookie,
        headers: { "x-forwarded-for": `198.18.${i}.${i}`, [PEER_HEADER]: "192.0.2.44" },
      });
      return res;
    };
    // Password spraying: five different accounts, one peer, a fresh forged hop each time.
    for (let i = 1; i <= 5; i++) await attempt("guess-number-one", i);
    const { csrfToken, cookie } = await csrf();
    const res = await nextAuth(["callback", "credentials"], {
      method: "POST",
      form: { csrfToken, email, password: "the-right-password", json: "true", callbackUrl: `${TEST_BASE_URL}/studios` },
      cookie,
      headers: { "x-forwarded-for": "198.18.99.99", [PEER_HEADER]: "192.0.2.44" },
    });
    const { url } = (await res.json()) as { url: string };
    expect(new URL(url).searchParams.get("error")).toBe(LOGIN_ERROR_MESSAGE);
    expect(res.headers.getSetCookie().some((c) => c.startsWith("next-auth.session-token="))).toBe(false);
  });
});

describe("5. sign-up, reset and sign-in links do not tell whether an address has an account", () => {
  it("signup answers the same for a new and a taken address; the taken address's owner gets a mail, and nothing changes", async () => {
    const taken = uniqueEmail("taken");
    const owner = await makeUser({ email: taken, password: "owners-own-password" });
    const fresh = await call(signupRoute.POST, { method: "POST", path: "/api/v1/signup", body: { email: uniqueEmail("fresh"), password: "long-enough-pass", name: "New" } });
    const again = await call(signupRoute.POST, { method: "POST", path: "/api/v1/signup", body: { email: taken.toUpperCase(), password: "attackers-password", name: "Not The Owner" } });
    expect(again.status).toBe(fresh.status);
    expect(again.body).toEqual(fresh.body);
    await settleAfterResponse();
    expect((await latestCapturedMailTo(taken)).subject).toBe("You already have a Kickdrift account");
    const [row] = await db.select().from(users).where(eq(users.email, taken));
    expect(row.passwordHash).toBe(owner.passwordHash);
    expect(row.name).toBe(owner.name);
  });

  it("a reset request answers before looking the address up, for a known and an unknown address alike", async () => {
    const known = await makeUser({ email: uniqueEmail("known") });
    const release = holdAfterResponse();
    const a = await call(resetRoute.POST, { method: "POST", path: "/api/v1/password-reset", body: { email: known.email } });
    const b = await call(resetRoute.POST, { method: "POST", path: "/api/v1/password-reset", body: { email: uniqueEmail("unknown") } });
    expect([a.status, b.status]).toEqual([202, 202]);
    expect(a.body).toEqual(b.body);
    // Answered with the work still held: no reset written, no mail sent yet.
    expect(await db.select().from(passwordResets).where(eq(passwordResets.userId, known.id))).toHaveLength(0);
    release();
    await settleAfterResponse();
    expect(await db.select().from(passwordResets).where(eq(passwordResets.userId, known.id))).toHaveLength(1);
    expect((await latestCapturedMailTo(known.email)).subject).toContain("Reset");
  });

  it("a sign-in link is mailed after the answer", async () => {
    const known = await makeUser({ email: uniqueEmail("linked") });
    const release = holdAfterResponse();
    const { csrfToken, cookie } = await csrf();
    const res = await nextAuth(["signin", "email"], { method: "POST", form: { csrfToken, email: known.email, callbackUrl: `${TEST_BASE_URL}/studios`, json: "true" }, cookie });
    expect(res.status).toBe(200);
    expect(await mailsTo(known.email)).toHaveLength(0);
    release();
    await settleAfterResponse();
    expect(await mailsTo(known.email)).toHaveLength(1);
  });
});

describe("6. sessions end on the server", () => {
  it("sign-out ends the session: the same cookie gets 401 afterwards", async () => {
    const user = await makeUser({ password: "signing-out-pass" });
    const session = await passwordSignIn(user.email, "signing-out-pass", "198.51.100.61");
    expect(session.ok).toBe(true);
    expect((await me(session.cookie)).status).toBe(200);
    const { csrfToken } = (await (await nextAuth(["csrf"], { cookie: session.cookie })).json()) as { csrfToken: string };
    const out = await nextAuth(["signout"], { method: "POST", form: { csrfToken, json: "true" }, cookie: session.cookie });
    expect(out.status).toBe(200);
    expect((await me(session.cookie)).status).toBe(401);
  });

  it("'sign out everywhere' ends every session of the person, and only theirs", async () => {
    const user = await makeUser();
    const other = await makeUser();
    const [laptop, phone, theirs] = [await sessionCookie(user), await sessionCookie(user), await sessionCookie(other)];
    const res = await call(sessionsRoute.DELETE, { method: "DELETE", path: "/api/v1/me/sessions", cookie: laptop });
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ ended: 2 });
    expect((await me(laptop)).status).toBe(401);
    expect((await me(phone)).status).toBe(401);
    expect((await me(theirs)).status).toBe(200);
  });

  it("losing a studio role ends the member's sessions", async () => {
    const owner = await makeUser();
    const engineer = await makeUser();
    const studioId = await makeStudio("Bracken Tide Games", [
      { user: owner, role: "owner" },
      { user: engineer, role: "engineer" },
    ]);
    const engineerCookie = await sessionCookie(engineer);
    const removed = await call(memberRoute.DELETE, { method: "DELETE", path: `/api/v1/studios/${studioId}/members/${engineer.id}`, params: { studioId, userId: engineer.id }, cookie: await sessionCookie(owner) });
    expect(removed.status).toBe(200);
    expect((await me(engineerCookie)).status).toBe(401);
    const open = await db.select().from(userSessions).where(and(eq(userSessions.userId, engineer.id)));
    expect(open.every((s) => s.revokedAt !== null)).toBe(true);
  });
});

describe("7. mail-sending routes and Checkout are rate-limited", () => {
  it("the 6th sign-in link for one address within the hour is refused with 429 and no mail", async () => {
    const email = uniqueEmail("flooded");
    const ask = async () => {
      const { csrfToken, cookie } = await csrf();
      return nextAuth(["signin", "email"], { method: "POST", form: { csrfToken, email, callbackUrl: `${TEST_BASE_URL}/studios`, json: "true" }, cookie });
    };
    for (let i = 0; i < RATE_LIMITS.magicLinkPerEmail.points; i++) expect((await ask()).status).toBe(200);
    const refused = await ask();
    expect(refused.status).toBe(429);
    expect(Number(refused.headers.get("retry-after"))).toBeGreaterThan(0);
    const body = (await refused.json()) as { url: string; error: { code: string; field: string } };
    expect(new URL(body.url).searchParams.get("error")).toBe("TooManyRequests");
    expect(body.error).toMatchObject({ code: "rate_limited", field: "email" });
    await settleAfterResponse();
    expect(await mailsTo(email)).toHaveLength(RATE_LIMITS.magicLinkPerEmail.points);
  });

  it("the 6th reset request for one address within the hour is refused with 429 naming the limit", async () => {
    const email = uniqueEmail("resets");
    for (let i = 0; i < RATE_LIMITS.resetPerEmail.points; i++) expect((await call(resetRoute.POST, { method: "POST", path: "/x", body: { email } })).status).toBe(202);
    const refused = await call(resetRoute.POST, { method: "POST", path: "/x", body: { email } });
    expect(refused.status).toBe(429);
    expect(errorOf(refused.body).message).toContain(`at most ${RATE_LIMITS.resetPerEmail.points} per 60 minutes`);
  });

  it("invitations are limited per studio", async () => {
    const owner = await makeUser();
    const studioId = await makeStudio("Invite Flood Games", [{ user: owner, role: "owner" }]);
    for (let i = 0; i < RATE_LIMITS.invitesPerStudio.points; i++) await consumeRateLimit("invitesPerStudio", studioId);
    const res = await call(invitesRoute.POST, { method: "POST", path: "/x", params: { studioId }, body: { email: uniqueEmail("one-too-many"), role: "engineer" }, cookie: await sessionCookie(owner) });
    expect(res.status).toBe(429);
    expect(errorOf(res.body).code).toBe("rate_limited");
  });
});

describe("9. tokens and invites are listed to owners only", () => {
  it("engineers and finance get 403; the owner gets the lists", async () => {
    const [owner, engineer, finance] = [await makeUser(), await makeUser(), await makeUser()];
    const studioId = await makeStudio("Lichen Orbit Games", [
      { user: owner, role: "owner" },
      { user: engineer, role: "engineer" },
      { user: finance, role: "finance" },
    ]);
    for (const route of [tokensRoute, invitesRoute]) {
      for (const person of [engineer, finance]) {
        const res = await call(route.GET, { path: "/x", params: { studioId }, cookie: await sessionCookie(person) });
        expect(res.status).toBe(403);
      }
      expect((await call(route.GET, { path: "/x", params: { studioId }, cookie: await sessionCookie(owner) })).status).toBe(200);
    }
  });
});

describe("11. names: NFC, no lone surrogates, no bidirectional controls", () => {
  it("stores a studio name in NFC and refuses U+202E in studio and token names, naming the field", async () => {
    const owner = await makeUser();
    const cookie = await sessionCookie(owner);
    const decomposed = await call(studiosRoute.POST, { method: "POST", path: "/x", body: { name: "Cafe\u0301 Rebound" }, cookie });
    expect(decomposed.status).toBe(201);
    const [row] = await db.select().from(studios).where(eq(studios.name, "Caf\u00e9 Rebound"));
    expect(row).toBeDefined();
    const rlo = await call(studiosRoute.POST, { method: "POST", path: "/x", body: { name: "Crate\u202Egnp.exe" }, cookie });
    expect(rlo.status).toBe(400);
    expect(errorOf(rlo.body)).toMatchObject({ field: "name" });
    expect(errorOf(rlo.body).message).toContain("U+202E");
    const studioId = row.id;
    await db.insert((await import("@/db/schema")).memberships).values({ studioId, userId: owner.id, role: "owner" }).onConflictDoNothing();
    const token = await call(tokensRoute.POST, { method: "POST", path: "/x", params: { studioId }, body: { name: "ci\u2066 uploader", scopes: ["read"] }, cookie });
    expect(token.status).toBe(400);
    expect(errorOf(token.body).field).toBe("name");
    expect(await db.select().from(apiTokens).where(eq(apiTokens.studioId, studioId))).toHaveLength(0);
  });
});
