/** Server start-up (instrumentation.register) and the demo seed: idempotent, and the printed sign-ins work. */
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import type { Db } from "@/db/client";
import * as schema from "@/db/schema";
import { DEMO_ACCOUNTS, DEMO_STUDIO_NAME, demoSignInText, seedDemo } from "@/server/seed";
import { runningMailFake } from "@/lib/fakes/smtp-fake";
import * as mailRoute from "@/app/api/v1/dev/mail/route";
import * as meRoute from "@/app/api/v1/me/route";
import { register } from "@/instrumentation";
import { closeTestDb, countRows, useFreshDb } from "../helpers/db";
import { call, sessionCookie } from "../helpers/http";
import { makeUser } from "../helpers/factories";
import { passwordSignIn } from "../helpers/next-auth";

let db: Db;
beforeAll(async () => {
  db = await useFreshDb();
});
afterAll(async () => {
  await (await runningMailFake())?.close();
  await closeTestDb();
});

async function counts() {
  return {
    users: await countRows(db, schema.users),
    studios: await countRows(db, schema.studios),
    memberships: await countRows(db, schema.memberships),
  };
}

describe("start-up", () => {
  it("seeds the demo into an empty database once and starts one mail fake, even when register runs twice", async () => {
    vi.stubEnv("NEXT_RUNTIME", "nodejs");
    vi.stubEnv("KICKDRIFT_DEMO", "1");
    vi.stubEnv("MAIL_FAKE_PORT", "0");
    // The seed submits the demo's sweeps; no runner here, so none runs against this file's database after it closes.
    vi.stubEnv("KICKDRIFT_RUNNER", "off");
    const log = vi.spyOn(console, "log").mockImplementation(() => undefined);
    let printed = "";
    try {
      await Promise.all([register(), register()]);
      await register();
      printed = log.mock.calls.map((c) => String(c[0])).join("\n");
    } finally {
      vi.unstubAllEnvs();
      log.mockRestore();
    }
    expect(await counts()).toEqual({ users: 4, studios: 1, memberships: 3 });
    const fake = await runningMailFake();
    expect(fake?.port).toBeGreaterThan(0);
    // The sign-ins are printed at start.
    for (const account of DEMO_ACCOUNTS) expect(printed).toContain(account.email);
    expect(printed).toContain(DEMO_STUDIO_NAME);
  });

  it("seeding again changes nothing", async () => {
    const before = await counts();
    const again = await seedDemo(db);
    expect(again.created).toBe(false);
    expect(await counts()).toEqual(before);
  });

  it("every printed demo password signs in, with the printed role", async () => {
    const text = demoSignInText("http://localhost:3000");
    for (const [i, account] of DEMO_ACCOUNTS.entries()) {
      expect(text).toContain(account.password);
      const result = await passwordSignIn(account.email, account.password, `192.0.2.${10 + i}`);
      expect(result.ok, account.email).toBe(true);
      const me = await call(meRoute.GET, { path: "/api/v1/me", cookie: result.cookie });
      const body = me.body as { user: { isAdmin: boolean }; studios: { name: string; role: string }[] };
      if (account.role === "admin") {
        expect(body.user.isAdmin).toBe(true);
        expect(body.studios).toEqual([]);
      } else {
        expect(body.user.isAdmin).toBe(false);
        expect(body.studios).toEqual([{ id: expect.any(String), name: DEMO_STUDIO_NAME, role: account.role }]);
      }
    }
  });
});

describe("the local mailbox route", () => {
  it("exists only while the mail fake is on (no SMTP_URL), for a platform admin", async () => {
    const admin = await sessionCookie(await makeUser({ isAdmin: true }));
    expect((await call(mailRoute.GET, { path: "/api/v1/dev/mail", cookie: admin })).status).toBe(200);
    vi.stubEnv("SMTP_URL", "smtp://mail.example.test:587");
    try {
      const res = await call(mailRoute.GET, { path: "/api/v1/dev/mail", cookie: admin });
      expect(res.status).toBe(404);
    } finally {
      vi.unstubAllEnvs();
    }
  });
});
