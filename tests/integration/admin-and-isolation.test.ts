/** Tenant isolation answers exactly like "does not exist"; admin lists show studios and users without secrets. */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { newId } from "@/db/ids";
import * as studioRoute from "@/app/api/v1/studios/[studioId]/route";
import * as membersRoute from "@/app/api/v1/studios/[studioId]/members/route";
import * as adminStudiosRoute from "@/app/api/v1/admin/studios/route";
import * as adminUsersRoute from "@/app/api/v1/admin/users/route";
import { closeTestDb, useFreshDb } from "../helpers/db";
import { makeStudio, makeToken, makeUser } from "../helpers/factories";
import { call, sessionCookie } from "../helpers/http";

beforeAll(async () => {
  await useFreshDb();
});
afterAll(closeTestDb);

describe("another studio's id", () => {
  it("gets the same status, body and headers as an id that does not exist, for people and tokens", async () => {
    const mine = await makeUser();
    const theirs = await makeUser();
    const myStudio = await makeStudio("Cinder Gull Games", [{ user: mine, role: "owner" }]);
    const theirStudio = await makeStudio("Hollow Reef Studio", [{ user: theirs, role: "owner" }]);
    const missing = newId("std");
    const cookie = await sessionCookie(mine);
    const token = await makeToken(myStudio, ["read", "write"]);
    for (const route of [studioRoute.GET, membersRoute.GET]) {
      for (const auth of [{ cookie }, { bearer: token.secret }]) {
        const other = await call(route, { path: "/x", params: { studioId: theirStudio }, ...auth });
        const none = await call(route, { path: "/x", params: { studioId: missing }, ...auth });
        expect(other.status).toBe(404);
        expect(other.body).toEqual(none.body);
        expect([...other.res.headers]).toEqual([...none.res.headers]);
      }
    }
  });
});

describe("admin lists", () => {
  it("list every studio with its member count and every user, never a password hash", async () => {
    const admin = await makeUser({ isAdmin: true, password: "operator-long-password" });
    const owner = await makeUser({ password: "owner-long-password" });
    const studioId = await makeStudio("Moss Anvil Games", [{ user: owner, role: "owner" }]);
    const cookie = await sessionCookie(admin);
    const studios = await call(adminStudiosRoute.GET, { path: "/x", cookie });
    expect(studios.status).toBe(200);
    expect((studios.body as { studios: unknown[] }).studios).toContainEqual(
      expect.objectContaining({ id: studioId, name: "Moss Anvil Games", status: "active", memberCount: 1 }),
    );
    const usersRes = await call(adminUsersRoute.GET, { path: "/x", cookie });
    const list = (usersRes.body as { users: Record<string, unknown>[] }).users;
    expect(list).toContainEqual(expect.objectContaining({ id: owner.id, email: owner.email, isAdmin: false, studioCount: 1 }));
    expect(list).toContainEqual(expect.objectContaining({ id: admin.id, isAdmin: true, studioCount: 0 }));
    const text = JSON.stringify(usersRes.body);
    expect(text).not.toMatch(/password|\$2[aby]\$/i);
  });
});
