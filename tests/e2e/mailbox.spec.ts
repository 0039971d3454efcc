import { spawn } from "node:child_process";
import { DEMO_ADMIN, expect, signInWithPassword, test } from "./helpers";

// playwright.config.ts starts a second server one port up as a production start would run: SMTP_URL and
// the Stripe keys set, no KICKDRIFT_DEMO.
const port = Number(process.env.KD_E2E_PORT ?? 3100);
const productionBaseURL = `http://localhost:${port + 1}`;
const DEMO_ENGINEER = { email: "tobiah@gannetyard.test", password: "crateslide-engineer" };
const BANNER = "Demo instance: payments are fake (test cards only); mail is captured here, not delivered.";

test("the demo mailbox asks anonymous visitors to sign in (API 401); the demo banner is on every page", async ({ page, request }) => {
  // Anonymous: the page asks for a sign-in, the API answers 401.
  await page.goto("/mail");
  await expect(page).toHaveURL(/\/signin\?callbackUrl=%2Fmail$/);
  expect((await request.get("/api/v1/dev/mail")).status()).toBe(401);
  for (const path of ["/", "/signin", "/reset"]) {
    await page.goto(path);
    await expect(page.getByTestId("demo-banner")).toHaveText(BANNER);
  }

});

test("the demo mailbox is 403 to a studio member and opens for the platform admin", async ({ browser }) => {
  // A studio member (not an admin): 403 page, no nav link.
  const engineerContext = await browser.newContext();
  const engineer = await engineerContext.newPage();
  await signInWithPassword(engineer, DEMO_ENGINEER.email, DEMO_ENGINEER.password);
  await expect(engineer.getByTestId("demo-banner")).toHaveText(BANNER);
  await expect(engineer.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Mailbox" })).toHaveCount(0);
  expect((await engineer.goto("/mail"))?.status()).toBe(403);
  expect((await engineer.request.get("/api/v1/dev/mail")).status()).toBe(403);
  await engineerContext.close();

  // The platform admin: the mailbox and its nav link.
  const adminContext = await browser.newContext();
  const admin = await adminContext.newPage();
  await signInWithPassword(admin, DEMO_ADMIN.email, DEMO_ADMIN.password);
  const response = await admin.goto("/mail");
  expect(response?.status()).toBe(200);
  await expect(admin.getByRole("heading", { name: "Mailbox", level: 1 })).toBeVisible();
  await expect(admin.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Mailbox" })).toBeVisible();
  expect((await admin.request.get("/api/v1/dev/mail")).status()).toBe(200);
  await adminContext.close();
});

test("a production start with SMTP and Stripe configured has no mailbox page, API, nav link or demo banner", async ({ page, request }) => {
  const response = await page.goto(`${productionBaseURL}/mail`);
  expect(response?.status()).toBe(404);
  await expect(page.getByTestId("not-found")).toBeVisible();

  const api = await request.get(`${productionBaseURL}/api/v1/dev/mail`);
  expect(api.status()).toBe(404);

  for (const path of ["/", "/signin"]) {
    await page.goto(`${productionBaseURL}${path}`);
    await expect(page.getByRole("link", { name: "Kickdrift home" })).toBeVisible();
    await expect(page.getByRole("link", { name: "Mailbox" })).toHaveCount(0);
    await expect(page.getByTestId("demo-banner")).toHaveCount(0);
  }
});

test("a production start without SMTP_URL and the Stripe keys refuses, naming them in one line", async () => {
  const env = Object.fromEntries(Object.entries(process.env).filter(([k]) => !/^(SMTP_URL|STRIPE_|KICKDRIFT_|MAIL_FAKE|DATABASE_URL)/.test(k)));
  const child = spawn("npx", ["next", "start", "-p", String(port + 5)], {
    env: { ...env, NODE_ENV: "production", NEXT_DIST_DIR: process.env.NEXT_DIST_DIR ?? ".next", KICKDRIFT_DATA_DIR: test.info().outputPath("data") },
    stdio: ["ignore", "pipe", "pipe"],
  });
  let stderr = "";
  child.stderr.on("data", (chunk: Buffer) => (stderr += chunk.toString()));
  const code = await new Promise<number | null>((resolve) => child.on("exit", resolve));
  expect(code).toBe(1);
  const lines = stderr.trim().split("\n").filter((line) => line.includes("kickdrift"));
  expect(lines).toEqual([
    "[kickdrift] refusing to start: NODE_ENV=production needs SMTP_URL, STRIPE_SECRET_KEY, STRIPE_WEBHOOK_SECRET (the local mail and Stripe fakes run only on a demo instance, KICKDRIFT_DEMO=1, in development and in tests).",
  ]);
});
