/**
 * Issue 17: the proxied campaign stalled on `PATCH /api/v1/studios/..%252F../members/{userId}` with a
 * write token. Sent straight to the app, that request is answered at once; the stall was the validating
 * proxy (Prism drops a JSON body that parses to 0, null or false but forwards its Content-Length, so the
 * app waits for bytes that never come). What the app owes such requests: a prompt 4xx JSON error for
 * encoded dot-segments in a route segment, with any body, and a 400 naming "body" for a top-level JSON
 * value that is not an object — over real HTTP, by a token and by a signed-in owner.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import * as membersRoute from "@/app/api/v1/studios/[studioId]/members/route";
import { pathDecodes } from "@/lib/api/path-segments";
import { closeTestDb, TEST_BASE_URL, useFreshDb } from "../helpers/db";
import { makeStudio, makeToken, makeUser } from "../helpers/factories";
import { call, errorOf, sessionCookie } from "../helpers/http";
import { startAppServer, type AppServer } from "../helpers/app-server";

let app: AppServer;
let studioId: string;
let ownerId: string;
let engineerId: string;
let cookie: string;
let writeToken: string;
beforeAll(async () => {
  await useFreshDb();
  const owner = await makeUser();
  const engineer = await makeUser();
  ownerId = owner.id;
  engineerId = engineer.id;
  studioId = await makeStudio("Saltmarsh Rollers", [
    { user: owner, role: "owner" },
    { user: engineer, role: "engineer" },
  ]);
  cookie = await sessionCookie(owner);
  writeToken = (await makeToken(studioId, ["write"])).secret;
  app = await startAppServer();
});
afterAll(async () => {
  await app?.stop();
  await closeTestDb();
});

/** The studio segment as the campaign sent it, and the other spellings of "../.." a client may send. */
const DOT_SEGMENTS = ["..%252F..", "..%2F..", "%2e%2e%2F%2e%2e", "..%5C..", "%2E%2E", "..%00"];
/** Bodies whose JSON value is falsy (what the proxy dropped), a wrong type, and a valid one. */
const BODIES = ["0", "null", "false", '""', "[]", '{"role":"engineer"}'];

async function send(path: string, body: string, auth: Record<string, string>): Promise<{ status: number; body: unknown }> {
  // A hang guard, not a speed check: a request that gets no answer fails here instead of stalling the run.
  const res = await fetch(`${app.url}${path}`, {
    method: "PATCH",
    headers: { ...auth, "content-type": "application/json", origin: TEST_BASE_URL },
    body,
    signal: AbortSignal.timeout(60_000),
  });
  const text = await res.text();
  return { status: res.status, body: JSON.parse(text) as unknown };
}

describe("encoded dot-segments in a studio id", () => {
  it("decode as a path (no malformed escape), so the router sees them and the guard answers", () => {
    for (const segment of DOT_SEGMENTS) expect(pathDecodes(`/api/v1/studios/${segment}/members/usr_x`), segment).toBe(true);
  });

  it("answer 404 not_found over HTTP for a write token and for the owner, whatever the body", async () => {
    const seen: string[] = [];
    for (const segment of DOT_SEGMENTS) {
      for (const body of BODIES) {
        for (const [who, auth] of [
          ["token", { authorization: `Bearer ${writeToken}` }],
          ["owner", { cookie }],
        ] as const) {
          const res = await send(`/api/v1/studios/${segment}/members/${engineerId}`, body, auth);
          seen.push(`${who} ${segment} ${body} → ${res.status}`);
          expect(res.status, `${who} ${segment} ${body}`).toBe(404);
          expect(errorOf(res.body).code).toBe("not_found");
        }
      }
    }
    expect(seen).toHaveLength(DOT_SEGMENTS.length * BODIES.length * 2);
  });
});

describe("a JSON body that is not an object", () => {
  it("is refused with 400 naming the body, on the real studio, and the member's role is unchanged", async () => {
    for (const body of ["0", "null", "false", '""', "[]", "1"]) {
      const res = await send(`/api/v1/studios/${studioId}/members/${engineerId}`, body, { cookie });
      expect(res.status, body).toBe(400);
      expect(errorOf(res.body).field, body).toBe("body");
    }
    const members = await call(membersRoute.GET, { path: `/api/v1/studios/${studioId}/members`, params: { studioId }, cookie });
    const roles = (members.body as { members: { userId?: string; id?: string; role: string }[] }).members.map((m) => [m.userId ?? m.id, m.role]);
    expect(Object.fromEntries(roles)).toEqual({ [ownerId]: "owner", [engineerId]: "engineer" });
  });
});
