/**
 * Fakes only where they belong: a production start without SMTP_URL or the Stripe keys refuses with
 * one line naming what is missing; the demo's captured mail is a platform admin's alone.
 */
import { spawnSync } from "node:child_process";
import { existsSync, mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import * as mailRoute from "@/app/api/v1/dev/mail/route";
import { startMailFake, type MailFake } from "@/lib/fakes/smtp-fake";
import { demoBannerText, isMailFakeEnabled, isStripeFakeEnabled, productionStartProblem } from "@/lib/mail/mode";
import { usesStripeFake } from "@/lib/billing/stripe";
import { closeTestDb, useFreshDb } from "../helpers/db";
import { makeStudio, makeUser } from "../helpers/factories";
import { call, sessionCookie } from "../helpers/http";

/** Starts the server's start-up hook (instrumentation.register) in a process of its own, as `next start` would. */
function startProcess(env: Record<string, string>): { status: number | null; stderr: string; dataDir: string } {
  const parent = mkdtempSync(path.join(tmpdir(), "kickdrift-start-"));
  const dataDir = path.join(parent, "data");
  const clean = Object.fromEntries(
    Object.entries(process.env).filter(([k]) => !/^(SMTP_URL|STRIPE_|KICKDRIFT_|MAIL_FAKE|DATABASE_URL|NODE_ENV|VITEST)/.test(k)),
  );
  const result = spawnSync(
    process.execPath,
    ["--import", "tsx", "--import", "./scripts/server-only-hook.mjs", "-e", "import('./instrumentation.ts').then((m) => m.register()).then(() => process.exit(0))"],
    {
      cwd: process.cwd(),
      env: { ...clean, NEXT_RUNTIME: "nodejs", KICKDRIFT_DATA_DIR: dataDir, KICKDRIFT_RUNNER: "off", MAIL_FAKE_PORT: "0", STRIPE_FAKE_PORT: "0", ...env } as unknown as NodeJS.ProcessEnv,
      encoding: "utf8",
      timeout: 60_000,
    },
  );
  const out = { status: result.status, stderr: result.stderr.trim(), dataDir };
  rmSync(parent, { recursive: true, force: true });
  return out;
}

describe("a production start (NODE_ENV=production, no KICKDRIFT_DEMO)", () => {
  it("refuses without SMTP_URL or the Stripe keys, with one line naming each missing setting, before touching the data folder", () => {
    const started = startProcess({ NODE_ENV: "production" });
    expect(started.status).toBe(1);
    expect(started.stderr.split("\n")).toHaveLength(1);
    expect(started.stderr).toContain("refusing to start: NODE_ENV=production needs SMTP_URL, STRIPE_SECRET_KEY, STRIPE_WEBHOOK_SECRET");
    expect(existsSync(started.dataDir)).toBe(false);
  });

  it("names only what is missing: SMTP set, Stripe keys absent", () => {
    const started = startProcess({ NODE_ENV: "production", SMTP_URL: "smtp://127.0.0.1:9" });
    expect(started.status).toBe(1);
    expect(started.stderr).toMatch(/needs STRIPE_SECRET_KEY, STRIPE_WEBHOOK_SECRET \(/);
    expect(started.stderr).not.toContain("SMTP_URL,");
  });

  it("names SMTP_URL alone when the Stripe keys are set", () => {
    const started = startProcess({ NODE_ENV: "production", STRIPE_SECRET_KEY: "sk_test_x", STRIPE_WEBHOOK_SECRET: "whsec_x" });
    expect(started.status).toBe(1);
    expect(started.stderr).toMatch(/needs SMTP_URL \(/);
  });

  it("never switches a fake on, even if the start-up check were skipped", () => {
    const production = { NODE_ENV: "production" };
    expect(isMailFakeEnabled(production)).toBe(false);
    expect(isStripeFakeEnabled(production)).toBe(false);
    expect(demoBannerText(production)).toBeNull();
    const configured = { NODE_ENV: "production", SMTP_URL: "smtp://relay.example.test", STRIPE_SECRET_KEY: "sk_live_x", STRIPE_WEBHOOK_SECRET: "whsec_x" };
    expect(productionStartProblem(configured)).toBeNull();
    expect(demoBannerText(configured)).toBeNull();
  });
});

describe("where the fakes may run", () => {
  it("a demo start (KICKDRIFT_DEMO=1) in production mode starts with both fakes and says so on its banner", () => {
    const demo = { NODE_ENV: "production", KICKDRIFT_DEMO: "1" };
    expect(productionStartProblem(demo)).toBeNull();
    expect(isMailFakeEnabled(demo)).toBe(true);
    expect(isStripeFakeEnabled(demo)).toBe(true);
    expect(demoBannerText(demo)).toBe("Demo instance: payments are fake (test cards only); mail is captured here, not delivered.");
  });

  it("development and tests may use the fakes; a configured SMTP_URL or Stripe key always wins", () => {
    for (const NODE_ENV of ["development", "test"]) {
      expect(productionStartProblem({ NODE_ENV })).toBeNull();
      expect(isMailFakeEnabled({ NODE_ENV })).toBe(true);
      expect(isMailFakeEnabled({ NODE_ENV, SMTP_URL: "smtp://relay.example.test" })).toBe(false);
      expect(isStripeFakeEnabled({ NODE_ENV, STRIPE_SECRET_KEY: "sk_test_x" })).toBe(false);
    }
  });

  it("billing does not use the Stripe fake in production mode without the demo", () => {
    vi.stubEnv("NODE_ENV", "production");
    vi.stubEnv("STRIPE_SECRET_KEY", "");
    try {
      expect(usesStripeFake()).toBe(false);
      vi.stubEnv("KICKDRIFT_DEMO", "1");
      expect(usesStripeFake()).toBe(true);
    } finally {
      vi.unstubAllEnvs();
    }
  });
});

describe("the demo's mailbox API", () => {
  let fake: MailFake;
  const cookies: Record<string, string> = {};
  beforeAll(async () => {
    await useFreshDb();
    fake = await startMailFake({ port: 0 });
    const owner = await makeUser({ name: "owner" });
    const engineer = await makeUser({ name: "engineer" });
    const finance = await makeUser({ name: "finance" });
    await makeStudio("Driftwood Lantern Games", [
      { user: owner, role: "owner" },
      { user: engineer, role: "engineer" },
      { user: finance, role: "finance" },
    ]);
    cookies.owner = await sessionCookie(owner);
    cookies.engineer = await sessionCookie(engineer);
    cookies.finance = await sessionCookie(finance);
    cookies.admin = await sessionCookie(await makeUser({ name: "operator", isAdmin: true }));
  });
  afterAll(async () => {
    await fake.close();
    await closeTestDb();
  });

  it("is 401 to anonymous, 403 to owners, engineers and finance, 200 to a platform admin", async () => {
    vi.stubEnv("NODE_ENV", "production");
    vi.stubEnv("KICKDRIFT_DEMO", "1");
    vi.stubEnv("SMTP_URL", "");
    try {
      const statuses: Record<string, number> = {};
      statuses.anonymous = (await call(mailRoute.GET, { path: "/api/v1/dev/mail" })).status;
      for (const who of ["owner", "engineer", "finance", "admin"]) statuses[who] = (await call(mailRoute.GET, { path: "/api/v1/dev/mail", cookie: cookies[who] })).status;
      expect(statuses).toEqual({ anonymous: 401, owner: 403, engineer: 403, finance: 403, admin: 200 });
    } finally {
      vi.unstubAllEnvs();
    }
  });

  it("does not exist on a production start, even for a platform admin", async () => {
    vi.stubEnv("NODE_ENV", "production");
    vi.stubEnv("KICKDRIFT_DEMO", "");
    vi.stubEnv("SMTP_URL", "");
    try {
      expect((await call(mailRoute.GET, { path: "/api/v1/dev/mail", cookie: cookies.admin })).status).toBe(404);
    } finally {
      vi.unstubAllEnvs();
    }
  });
});
