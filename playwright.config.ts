import { defineConfig } from "@playwright/test";
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";

/**
 * Browser tests against a production build (`npm run build` first; NEXT_DIST_DIR must match the build).
 * Every run starts the server on a fresh, empty data folder with the demo seed and the local mail fake.
 * The config is evaluated again in each worker process; the data folder is created once and handed on
 * through the environment so all of them agree on it.
 */
const port = Number(process.env.KD_E2E_PORT ?? 3100);
const mailFakePort = Number(process.env.KD_E2E_MAIL_PORT ?? 2626);
/** The local Stripe fake of the main server (the second server gets the next port). */
const stripeFakePort = Number(process.env.KD_E2E_STRIPE_PORT ?? 12500);
process.env.KD_E2E_STRIPE_PORT = String(stripeFakePort);
const baseURL = `http://localhost:${port}`;
/** A fresh folder per run, shared with the worker processes through the environment. */
function freshDataDir(variable: string): string {
  if (!process.env[variable]) {
    const created = mkdtempSync(path.join(tmpdir(), "kickdrift-e2e-"));
    process.env[variable] = created;
    // Only the process that made the folder removes it, at exit — after Playwright has stopped the web servers.
    process.on("exit", () => rmSync(created, { recursive: true, force: true }));
  }
  return process.env[variable]!;
}
const dataDir = freshDataDir("KD_E2E_DATA_DIR");
const smtpDataDir = freshDataDir("KD_E2E_SMTP_DATA_DIR");
/**
 * A second server started as production would be (no KICKDRIFT_DEMO): SMTP_URL and the Stripe keys set,
 * so it starts, and neither fake, the mailbox nor the demo banner exists (tests/e2e/mailbox.spec.ts).
 */
const smtpPort = port + 1;
const smtpBaseURL = `http://localhost:${smtpPort}`;

export default defineConfig({
  testDir: "tests/e2e",
  testMatch: "**/*.spec.ts",
  fullyParallel: false,
  workers: 1,
  retries: 0,
  timeout: 90_000,
  expect: { timeout: 15_000 },
  forbidOnly: Boolean(process.env.CI),
  reporter: [["list"]],
  outputDir: "test-results",
  use: {
    baseURL,
    headless: true,
    colorScheme: "light",
    viewport: { width: 1280, height: 860 },
    trace: "retain-on-failure",
    screenshot: "only-on-failure",
    launchOptions: {
      executablePath: "/usr/bin/chromium",
      args: ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"],
    },
  },
  webServer: [
    {
      command: `npx next start -p ${port}`,
      url: `${baseURL}/signin`,
      reuseExistingServer: false,
      timeout: 120_000,
      stdout: "pipe",
      stderr: "pipe",
      env: {
        NEXT_DIST_DIR: process.env.NEXT_DIST_DIR ?? ".next",
        KICKDRIFT_DATA_DIR: dataDir,
        KICKDRIFT_DEMO: "1",
        NEXTAUTH_URL: baseURL,
        MAIL_FAKE_PORT: String(mailFakePort),
        STRIPE_FAKE_PORT: String(stripeFakePort),
        // Billing runs against the local Stripe fake, never a configured Stripe account.
        STRIPE_SECRET_KEY: "",
        STRIPE_WEBHOOK_SECRET: "",
        // The flows read mail from the local fake and keep data in PGlite: never a configured SMTP server or database.
        SMTP_URL: "",
        DATABASE_URL: "",
      },
    },
    {
      command: `npx next start -p ${smtpPort}`,
      url: `${smtpBaseURL}/signin`,
      reuseExistingServer: false,
      timeout: 120_000,
      stdout: "ignore",
      stderr: "pipe",
      env: {
        NEXT_DIST_DIR: process.env.NEXT_DIST_DIR ?? ".next",
        KICKDRIFT_DATA_DIR: smtpDataDir,
        NEXTAUTH_URL: smtpBaseURL,
        KICKDRIFT_DEMO: "",
        // Port 9 (discard) on loopback: a configured relay that no test sends mail through.
        SMTP_URL: "smtp://127.0.0.1:9",
        DATABASE_URL: "",
        // A configured Stripe account at the same dead address: billing answers 503, nothing is faked.
        STRIPE_SECRET_KEY: "sk_test_kickdrift_e2e_production",
        STRIPE_WEBHOOK_SECRET: "whsec_kickdrift_e2e_production",
        STRIPE_API_URL: "http://127.0.0.1:9",
      },
    },
  ],
});
