/**
 * No input gives a 500: every guarded route method, called by a studio owner with hostile route
 * params and bodies (NUL characters, wrong types, deep nesting, huge strings), answers a 4xx JSON
 * error or succeeds, and the "unexpected error" path is never taken.
 */
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { startMailFake, type MailFake } from "@/lib/fakes/smtp-fake";
import { LOGIN_ERROR_MESSAGE } from "@/lib/auth/accounts";
import { closeTestDb, useFreshDb } from "../helpers/db";
import { makeStudio, makeUser } from "../helpers/factories";
import { call, sessionCookie } from "../helpers/http";
import { csrf, nextAuth } from "../helpers/next-auth";
import { concretePath, loadRoute, routePolicies } from "../helpers/routes";

let fake: MailFake;
let cookie: string;
let studioId: string;
beforeAll(async () => {
  await useFreshDb();
  fake = await startMailFake({ port: 0 });
  const owner = await makeUser({ password: "owner-long-password" });
  studioId = await makeStudio("Flint Heron Games", [{ user: owner, role: "owner" }]);
  cookie = await sessionCookie(owner);
});
afterAll(async () => {
  await fake.close();
  await closeTestDb();
});

const FIELDS = ["email", "password", "name", "role", "scopes", "token"];
let deep: unknown = "bottom";
for (let i = 0; i < 500; i++) deep = { nested: deep };
const HOSTILE_VALUES: unknown[] = ["\u0000", "a\u0000b", null, true, -1, 1e308, [], {}, ["\u0000"], "💥".repeat(50), " ", deep];
const HOSTILE_BODIES: unknown[] = [
  null,
  [],
  42,
  "just a string",
  { "\u0000": "key with NUL" },
  ...HOSTILE_VALUES.map((v) => Object.fromEntries(FIELDS.map((f) => [f, v]))),
  { email: "x".repeat(70_000) },
];
const HOSTILE_PARAMS = ["\u0000", "std_\u0000", "x".repeat(5_000), "../../etc/passwd", "%", "💥", " "];

describe("hostile input never reaches a 500", () => {
  // Thousands of route calls in one test: its timeout is a hang guard, set for a machine whose cores are busy.
  it("holds for every guarded route method", { timeout: 240_000 }, async () => {
    const errors = vi.spyOn(console, "error").mockImplementation(() => undefined);
    const failures: string[] = [];
    try {
      for (const { route, method } of await routePolicies()) {
        const mod = await loadRoute(route);
        const names = [...route.matchAll(/\[([^\]]+)\]/g)].map((m) => m[1]);
        const cases: { params: Record<string, string>; body?: unknown }[] = [];
        for (const bad of HOSTILE_PARAMS) {
          for (const target of names) {
            const params = Object.fromEntries(names.map((n) => [n, n === "studioId" && target !== n ? studioId : "placeholder"]));
            params[target] = bad;
            cases.push({ params, body: method === "GET" || method === "DELETE" ? undefined : { name: "ok" } });
          }
        }
        if (method !== "GET" && method !== "DELETE") {
          const params = Object.fromEntries(names.map((n) => [n, n === "studioId" ? studioId : "placeholder"]));
          for (const body of HOSTILE_BODIES) cases.push({ params, body: JSON.stringify(body) });
        }
        for (const c of cases) {
          const res = await call(mod[method], { method, path: concretePath(route, {}), params: c.params, body: c.body, cookie });
          const label = `${method} ${route} params=${JSON.stringify(c.params).slice(0, 60)} body=${String(c.body).slice(0, 40)}`;
          if (res.status >= 500) failures.push(`${label} → ${res.status}`);
          else if (res.status >= 400 && typeof (res.body as { error?: { code?: unknown } })?.error?.code !== "string") failures.push(`${label} → no JSON error`);
        }
      }
      const unexpected = errors.mock.calls.filter((c) => String(c[0]).includes("unexpected error"));
      expect(failures).toEqual([]);
      expect(unexpected.map((c) => String(c[1]).slice(0, 200))).toEqual([]);
    } finally {
      errors.mockRestore();
    }
  });

  it("holds for password sign-in: NUL or oversize fields get the generic message", async () => {
    for (const email of ["\u0000", "a\u0000@b.test", "x".repeat(5_000)]) {
      const { csrfToken, cookie: csrfCookie } = await csrf();
      const res = await nextAuth(["callback", "credentials"], {
        method: "POST",
        form: { csrfToken, email, password: "whatever-long", json: "true" },
        cookie: csrfCookie,
      });
      expect(res.status).toBe(401);
      const { url } = (await res.json()) as { url: string };
      expect(new URL(url).searchParams.get("error")).toBe(LOGIN_ERROR_MESSAGE);
    }
  });

  it("holds for the magic-link request with a NUL address", async () => {
    const { csrfToken, cookie: csrfCookie } = await csrf();
    const res = await nextAuth(["signin", "email"], {
      method: "POST",
      form: { csrfToken, email: "a\u0000@b.test", json: "true" },
      cookie: csrfCookie,
    });
    expect(res.status).toBeLessThan(500);
    const { url } = (await res.json()) as { url: string };
    expect(url).toContain("error=");
  });
});
