/** Role changes, removal with the last owner protected, and API tokens from creation to revocation. */
import { eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Db } from "@/db/client";
import { apiTokens, memberships } from "@/db/schema";
import * as memberRoute from "@/app/api/v1/studios/[studioId]/members/[userId]/route";
import * as membersRoute from "@/app/api/v1/studios/[studioId]/members/route";
import * as tokensRoute from "@/app/api/v1/studios/[studioId]/tokens/route";
import * as tokenRoute from "@/app/api/v1/studios/[studioId]/tokens/[tokenId]/route";
import * as studioRoute from "@/app/api/v1/studios/[studioId]/route";
import { sha256Hex } from "@/db/ids";
import { authorize, resolveActor, type RoutePolicy } from "@/lib/auth/guard";
import { ApiError } from "@/lib/errors";
import { buildRequest } from "../helpers/http";
import { closeTestDb, useFreshDb } from "../helpers/db";
import { makeStudio, makeToken, makeUser } from "../helpers/factories";
import { call, errorOf, sessionCookie } from "../helpers/http";

let db: Db;
beforeAll(async () => {
  db = await useFreshDb();
});
afterAll(closeTestDb);

async function studioWithOwner() {
  const owner = await makeUser({ name: "owner" });
  const engineer = await makeUser({ name: "engineer" });
  const studioId = await makeStudio("Quarry Bounce Games", [
    { user: owner, role: "owner" },
    { user: engineer, role: "engineer" },
  ]);
  return { owner, engineer, studioId, cookie: await sessionCookie(owner) };
}

const patchRole = (studioId: string, userId: string, role: string, cookie: string) =>
  call(memberRoute.PATCH, { method: "PATCH", path: "/x", params: { studioId, userId }, body: { role }, cookie });
const remove = (studioId: string, userId: string, cookie: string) =>
  call(memberRoute.DELETE, { method: "DELETE", path: "/x", params: { studioId, userId }, cookie });

describe("the last owner", () => {
  it("cannot be demoted or removed (409 last_owner), and stays owner", async () => {
    const { owner, studioId, cookie } = await studioWithOwner();
    const demote = await patchRole(studioId, owner.id, "engineer", cookie);
    expect(demote.status).toBe(409);
    expect(errorOf(demote.body).code).toBe("last_owner");
    expect(errorOf(demote.body).message).toMatch(/at least one owner/);
    const removal = await remove(studioId, owner.id, cookie);
    expect(removal.status).toBe(409);
    expect(errorOf(removal.body).code).toBe("last_owner");
    const [row] = await db.select().from(memberships).where(eq(memberships.userId, owner.id));
    expect(row.role).toBe("owner");
  });

  it("can step down once another member is owner", async () => {
    const { owner, engineer, studioId, cookie } = await studioWithOwner();
    const promote = await patchRole(studioId, engineer.id, "owner", cookie);
    expect(promote.status).toBe(200);
    expect((promote.body as { member: { role: string } }).member.role).toBe("owner");
    expect((await patchRole(studioId, owner.id, "finance", cookie)).status).toBe(200);
    // Now a finance member: owner actions are refused.
    expect((await patchRole(studioId, engineer.id, "engineer", cookie)).status).toBe(403);
    const newOwnerCookie = await sessionCookie(engineer);
    expect((await remove(studioId, owner.id, newOwnerCookie)).status).toBe(200);
    // Removal by another owner ended the removed person's sessions (issue 18)…
    const gone = await call(studioRoute.GET, { path: "/x", params: { studioId }, cookie });
    expect(gone.status).toBe(401);
    // …and signed in afresh they no longer see the studio at all.
    const fresh = await call(studioRoute.GET, { path: "/x", params: { studioId }, cookie: await sessionCookie(owner) });
    expect(fresh.status).toBe(404);
    // And the one remaining owner is protected again.
    expect((await remove(studioId, engineer.id, newOwnerCookie)).status).toBe(409);
  });

  it("of two owners demoting each other at once, exactly one succeeds", async () => {
    const a = await makeUser();
    const b = await makeUser();
    const studioId = await makeStudio("Twin Kettle Studio", [
      { user: a, role: "owner" },
      { user: b, role: "owner" },
    ]);
    const [ra, rb] = await Promise.all([
      patchRole(studioId, b.id, "engineer", await sessionCookie(a)),
      patchRole(studioId, a.id, "engineer", await sessionCookie(b)),
    ]);
    // One wins. The other is refused: 409 if both passed the guard before either wrote (the row lock
    // serialises them), 401 if the winner's demotion had already ended the loser's session (issue 18)
    // before the loser's guard ran.
    const statuses = [ra.status, rb.status].sort();
    expect(statuses[0]).toBe(200);
    expect([401, 409]).toContain(statuses[1]);
    const owners = (await db.select().from(memberships).where(eq(memberships.studioId, studioId))).filter((m) => m.role === "owner");
    expect(owners).toHaveLength(1);
  });

  it("answers 404 for a user who is not a member of this studio", async () => {
    const { studioId, cookie } = await studioWithOwner();
    const outsider = await makeUser();
    expect((await patchRole(studioId, outsider.id, "engineer", cookie)).status).toBe(404);
    expect((await remove(studioId, outsider.id, cookie)).status).toBe(404);
  });
});

describe("API tokens", () => {
  it("shows the secret once, stores only its hash, acts for its studio, and stops at revocation", async () => {
    const { studioId, cookie } = await studioWithOwner();
    const created = await call(tokensRoute.POST, {
      method: "POST",
      path: "/x",
      params: { studioId },
      cookie,
      body: { name: "nightly sweep runner", scopes: ["write", "read"] },
    });
    expect(created.status).toBe(201);
    const { token, secret } = created.body as { token: { id: string; prefix: string; scopes: string[] }; secret: string };
    expect(secret).toMatch(/^kd_[A-Za-z0-9_-]{43}$/); // 32 bytes in base64url without padding = 43 characters
    expect(secret.startsWith(token.prefix)).toBe(true);
    expect(token.scopes).toEqual(["read", "write"]);

    const [row] = await db.select().from(apiTokens).where(eq(apiTokens.id, token.id));
    expect(row.tokenHash).toBe(sha256Hex(secret));
    expect(JSON.stringify(row)).not.toContain(secret);

    const list = await call(tokensRoute.GET, { path: "/x", params: { studioId }, cookie });
    const listed = (list.body as { tokens: Record<string, unknown>[] }).tokens;
    expect(listed).toHaveLength(1);
    expect(JSON.stringify(listed)).not.toContain(secret);
    expect(listed[0]).toMatchObject({ id: token.id, name: "nightly sweep runner", lastUsedAt: null, revokedAt: null });

    const used = await call(membersRoute.GET, { path: "/x", params: { studioId }, bearer: secret });
    expect(used.status).toBe(200);
    expect((used.body as { members: unknown[] }).members).toHaveLength(2);
    const [afterUse] = await db.select().from(apiTokens).where(eq(apiTokens.id, token.id));
    expect(afterUse.lastUsedAt).not.toBeNull();

    const revoked = await call(tokenRoute.DELETE, { method: "DELETE", path: "/x", params: { studioId, tokenId: token.id }, cookie });
    expect(revoked.status).toBe(200);
    expect((revoked.body as { token: { revokedAt: string | null } }).token.revokedAt).not.toBeNull();
    const refused = await call(membersRoute.GET, { path: "/x", params: { studioId }, bearer: secret });
    expect(refused.status).toBe(401);
    expect(errorOf(refused.body).code).toBe("invalid_token");
    expect(refused.res.headers.get("www-authenticate")).toContain("Bearer");
    // The row is kept so the list still shows it, revoked.
    const after = await call(tokensRoute.GET, { path: "/x", params: { studioId }, cookie });
    expect((after.body as { tokens: { revokedAt: string | null }[] }).tokens[0].revokedAt).not.toBeNull();
  });

  it("refuses a malformed Authorization header with 401 rather than falling back to the cookie", async () => {
    const { studioId, cookie } = await studioWithOwner();
    const res = await call(studioRoute.GET, { path: "/x", params: { studioId }, cookie, headers: { authorization: "Basic Zm9vOmJhcg==" } });
    expect(res.status).toBe(401);
  });

  it("answers 404 when revoking a token of another studio", async () => {
    const first = await studioWithOwner();
    const second = await studioWithOwner();
    const created = await call(tokensRoute.POST, { method: "POST", path: "/x", params: { studioId: second.studioId }, cookie: second.cookie, body: { name: "theirs", scopes: ["read"] } });
    const tokenId = (created.body as { token: { id: string } }).token.id;
    const res = await call(tokenRoute.DELETE, { method: "DELETE", path: "/x", params: { studioId: first.studioId, tokenId }, cookie: first.cookie });
    expect(res.status).toBe(404);
    const [row] = await db.select().from(apiTokens).where(eq(apiTokens.id, tokenId));
    expect(row.revokedAt).toBeNull();
  });
});

describe("token scopes on studio routes (the policy later mutations such as sweeps will use)", () => {
  const WRITE_ROUTE: RoutePolicy = { access: "studio", roles: ["owner", "engineer"], token: "write" };
  const READ_ROUTE: RoutePolicy = { access: "studio", roles: "member", token: "read" };

  async function decide(policy: RoutePolicy, studioId: string, bearer: string): Promise<number> {
    try {
      const actor = await resolveActor(buildRequest({ path: "/x", bearer }));
      await authorize(policy, actor, studioId);
      return 200;
    } catch (error) {
      if (error instanceof ApiError) return error.status;
      throw error;
    }
  }

  it("lets write tokens mutate and read; read tokens only read (403 insufficient_scope)", async () => {
    const { studioId } = await studioWithOwner();
    const read = await makeToken(studioId, ["read"]);
    const write = await makeToken(studioId, ["write"]);
    expect(await decide(WRITE_ROUTE, studioId, write.secret)).toBe(200);
    expect(await decide(READ_ROUTE, studioId, write.secret)).toBe(200);
    expect(await decide(READ_ROUTE, studioId, read.secret)).toBe(200);
    expect(await decide(WRITE_ROUTE, studioId, read.secret)).toBe(403);
    const actor = await resolveActor(buildRequest({ path: "/x", bearer: read.secret }));
    await expect(authorize(WRITE_ROUTE, actor, studioId)).rejects.toMatchObject({ code: "insufficient_scope" });
  });

  it("refreshes lastUsedAt at most once a minute", async () => {
    const { studioId } = await studioWithOwner();
    const token = await makeToken(studioId, ["read"]);
    await resolveActor(buildRequest({ path: "/x", bearer: token.secret }));
    const [first] = await db.select().from(apiTokens).where(eq(apiTokens.id, token.id));
    await resolveActor(buildRequest({ path: "/x", bearer: token.secret }));
    const [second] = await db.select().from(apiTokens).where(eq(apiTokens.id, token.id));
    expect(second.lastUsedAt?.getTime()).toBe(first.lastUsedAt?.getTime());
    await db.update(apiTokens).set({ lastUsedAt: new Date(Date.now() - 61_000) }).where(eq(apiTokens.id, token.id));
    await resolveActor(buildRequest({ path: "/x", bearer: token.secret }));
    const [third] = await db.select().from(apiTokens).where(eq(apiTokens.id, token.id));
    expect(third.lastUsedAt!.getTime()).toBeGreaterThan(Date.now() - 5_000);
  });
});
