/** Bad input is refused with a 4xx naming the field, and nothing is half-written. */
import { eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import * as schema from "@/db/schema";
import type { Db } from "@/db/client";
import { MAX_JSON_BODY_BYTES } from "@/lib/api/body";
import * as signupRoute from "@/app/api/v1/signup/route";
import * as studiosRoute from "@/app/api/v1/studios/route";
import * as tokensRoute from "@/app/api/v1/studios/[studioId]/tokens/route";
import * as invitesRoute from "@/app/api/v1/studios/[studioId]/invites/route";
import * as memberRoute from "@/app/api/v1/studios/[studioId]/members/[userId]/route";
import { closeTestDb, countRows, useFreshDb } from "../helpers/db";
import { makeStudio, makeUser, uniqueEmail } from "../helpers/factories";
import { call, errorOf, sessionCookie } from "../helpers/http";

let db: Db;
beforeAll(async () => {
  db = await useFreshDb();
});
afterAll(closeTestDb);

const signup = (body: unknown) => call(signupRoute.POST, { method: "POST", path: "/api/v1/signup", body });

describe("POST /api/v1/signup refuses bad input without writing anything", () => {
  const cases: { title: string; body: unknown; status: number; code: string; field?: string }[] = [
    { title: "a short password", body: { email: uniqueEmail("short"), password: "puck-9", name: "Ada" }, status: 400, code: "validation_failed", field: "password" },
    { title: "a password over 200 characters", body: { email: uniqueEmail("long"), password: "x".repeat(201), name: "Ada" }, status: 400, code: "validation_failed", field: "password" },
    { title: "a malformed e-mail", body: { email: "crate-at-deck", password: "long-enough-pass", name: "Ada" }, status: 400, code: "validation_failed", field: "email" },
    { title: "a missing name", body: { email: uniqueEmail("noname"), password: "long-enough-pass" }, status: 400, code: "validation_failed", field: "name" },
    { title: "an unknown field", body: { email: uniqueEmail("extra"), password: "long-enough-pass", name: "Ada", isAdmin: true }, status: 400, code: "unknown_field", field: "isAdmin" },
    { title: "a JSON syntax error", body: '{"email": "a@b.test",', status: 400, code: "invalid_json" },
    { title: "a JSON array instead of an object", body: [], status: 400, code: "validation_failed" },
    { title: "an empty body", body: "", status: 400, code: "invalid_json" },
  ];
  it.each(cases)("$title → $status $code", async ({ body, status, code, field }) => {
    const before = await countRows(db, schema.users);
    const res = await signup(body);
    expect(res.status).toBe(status);
    const error = errorOf(res.body);
    expect(error.code).toBe(code);
    if (field) {
      expect(error.field).toBe(field);
      expect(error.message).toContain(field);
    }
    expect(await countRows(db, schema.users)).toBe(before);
  });

  it("names the length limit in the message for a short password", async () => {
    const res = await signup({ email: uniqueEmail("limit"), password: "short", name: "Ada" });
    expect(errorOf(res.body).message).toContain("10");
  });

  it("lists every issue, each with its field", async () => {
    const res = await signup({ email: "nope", password: "short", name: "", extra: 1 });
    const fields = errorOf(res.body).issues!.map((i) => i.field).sort();
    expect(fields).toEqual(["email", "extra", "name", "password"]);
  });

  it("refuses a body over 64 KiB with 413, whether or not Content-Length is declared", async () => {
    const before = await countRows(db, schema.users);
    const big = { email: uniqueEmail("big"), password: "long-enough-pass", name: "x".repeat(MAX_JSON_BODY_BYTES) };
    const declared = await signup(big);
    expect(declared.status).toBe(413);
    expect(errorOf(declared.body).code).toBe("payload_too_large");
    expect(errorOf(declared.body).message).toContain(String(MAX_JSON_BODY_BYTES));
    // A streamed body carries no Content-Length: the limit must hold while reading.
    const bytes = new TextEncoder().encode(JSON.stringify(big));
    const stream = new ReadableStream<Uint8Array>({
      start(controller) {
        for (let i = 0; i < bytes.length; i += 8192) controller.enqueue(bytes.slice(i, i + 8192));
        controller.close();
      },
    });
    const req = new Request("http://localhost:3000/api/v1/signup", {
      method: "POST",
      body: stream,
      headers: { "content-type": "application/json" },
      duplex: "half",
    } as RequestInit);
    expect(req.headers.get("content-length")).toBeNull();
    const streamed = await signupRoute.POST(req, { params: Promise.resolve({}) });
    expect(streamed.status).toBe(413);
    expect(await countRows(db, schema.users)).toBe(before);
  });

  it("accepts a body just under the limit as far as size goes (then validates it)", async () => {
    const res = await signup({ email: uniqueEmail("edge"), password: "long-enough-pass", name: "x".repeat(60_000) });
    expect(res.status).toBe(400);
    expect(errorOf(res.body).field).toBe("name");
  });

  it("answers an e-mail already taken exactly like a new one (issue 18: no enumeration), case-insensitively, and keeps one row", async () => {
    const email = uniqueEmail("taken");
    const first = await signup({ email, password: "long-enough-pass", name: "First" });
    expect(first.status).toBe(202);
    const before = await countRows(db, schema.users);
    const again = await signup({ email: email.toUpperCase(), password: "another-long-pass", name: "Second" });
    expect(again.status).toBe(202);
    expect(again.body).toEqual(first.body);
    expect(await countRows(db, schema.users)).toBe(before);
  });

  it("stores the e-mail lower-cased and the name trimmed, and never returns the password hash", async () => {
    const res = await signup({ email: "  Skipper.Puck@CrateWorks.TEST ", password: "long-enough-pass", name: " Skipper " });
    expect(res.status).toBe(202);
    expect(JSON.stringify(res.body)).not.toContain("$2");
    const [row] = await db.select().from(schema.users).where(eq(schema.users.email, "skipper.puck@crateworks.test"));
    expect(row.name).toBe("Skipper");
  });
});

describe("other bodies are validated the same way", () => {
  it("names nested and array fields, and writes nothing", async () => {
    const owner = await makeUser();
    const studioId = await makeStudio("Brine Owl Studio", [{ user: owner, role: "owner" }]);
    const cookie = await sessionCookie(owner);
    const tokensBefore = await countRows(db, schema.apiTokens);
    const badScope = await call(tokensRoute.POST, {
      method: "POST",
      path: `/api/v1/studios/${studioId}/tokens`,
      params: { studioId },
      cookie,
      body: { name: "deploy", scopes: ["read", "admin"] },
    });
    expect(badScope.status).toBe(400);
    expect(errorOf(badScope.body).field).toBe("scopes.1");
    const noScope = await call(tokensRoute.POST, {
      method: "POST",
      path: `/api/v1/studios/${studioId}/tokens`,
      params: { studioId },
      cookie,
      body: { name: "deploy", scopes: [] },
    });
    expect(errorOf(noScope.body).field).toBe("scopes");
    expect(await countRows(db, schema.apiTokens)).toBe(tokensBefore);

    const invitesBefore = await countRows(db, schema.invites);
    const badRole = await call(invitesRoute.POST, {
      method: "POST",
      path: `/api/v1/studios/${studioId}/invites`,
      params: { studioId },
      cookie,
      body: { email: uniqueEmail("x"), role: "captain" },
    });
    expect(badRole.status).toBe(400);
    expect(errorOf(badRole.body).field).toBe("role");
    expect(await countRows(db, schema.invites)).toBe(invitesBefore);

    const badPatch = await call(memberRoute.PATCH, {
      method: "PATCH",
      path: `/api/v1/studios/${studioId}/members/${owner.id}`,
      params: { studioId, userId: owner.id },
      cookie,
      body: { role: "engineer", note: "hi" },
    });
    expect(badPatch.status).toBe(400);
    expect(errorOf(badPatch.body)).toMatchObject({ code: "unknown_field", field: "note" });

    const studiosBefore = await countRows(db, schema.studios);
    const longName = await call(studiosRoute.POST, { method: "POST", path: "/api/v1/studios", cookie, body: { name: "n".repeat(81) } });
    expect(longName.status).toBe(400);
    expect(errorOf(longName.body).field).toBe("name");
    expect(errorOf(longName.body).message).toContain("80");
    expect(await countRows(db, schema.studios)).toBe(studiosBefore);
  });
});
