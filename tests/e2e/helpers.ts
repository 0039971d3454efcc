import { test as base, expect, type Browser, type BrowserContext, type Locator, type Page } from "@playwright/test";

/**
 * Every spec imports `test` from here: it fails a test when any page of any context the test opens
 * (the default one and every `browser.newContext()`) reports a Content-Security-Policy violation,
 * so the CSP the app sends can never silently break a page.
 */
export const test = base.extend<{ cspViolations: string[] }>({
  cspViolations: [
    async ({ browser, context }, provide) => {
      const violations: string[] = [];
      const watch = (ctx: BrowserContext) => {
        ctx.on("console", (message) => {
          const text = message.text();
          if (/Content Security Policy/i.test(text)) violations.push(`${message.location().url}: ${text}`);
        });
        // A securitypolicyviolation event for what the console does not report (e.g. report-only sources).
        void ctx.addInitScript(() => {
          document.addEventListener("securitypolicyviolation", (event) => {
            console.error(`Content Security Policy violation: ${event.violatedDirective} blocked ${event.blockedURI || "inline"} at ${event.sourceFile}:${event.lineNumber}`);
          });
        });
      };
      watch(context);
      const originalNewContext = browser.newContext.bind(browser);
      browser.newContext = async (...args: Parameters<Browser["newContext"]>) => {
        const created = await originalNewContext(...args);
        watch(created);
        return created;
      };
      try {
        await provide(violations);
      } finally {
        browser.newContext = originalNewContext;
      }
      expect(violations, "Content-Security-Policy violations").toEqual([]);
    },
    { auto: true },
  ],
});
export { expect };

/** The demo platform admin seeded by KICKDRIFT_DEMO=1 (server/seed.ts): the only reader of the demo mailbox. */
export const DEMO_ADMIN = { email: "ops@kickdrift.test", password: "kickdrift-operator" };

/** A fresh address per run, so a test never depends on what an earlier run left in a reused database. */
export function uniqueEmail(label: string): string {
  return `${label}.${Date.now().toString(36)}${Math.floor(Math.random() * 1e6).toString(36)}@driftwood-pucks.test`;
}

/**
 * The demo mailbox, opened by the demo platform admin in a context of its own (captured mail holds
 * sign-in and reset links, so nobody else may read it). Close the returned context when done.
 */
export async function openMailboxAsAdmin(browser: Browser): Promise<{ context: BrowserContext; page: Page }> {
  const context = await browser.newContext();
  const page = await context.newPage();
  await signInWithPassword(page, DEMO_ADMIN.email, DEMO_ADMIN.password, /\/(studios|admin)$/);
  await page.goto("/mail");
  return { context, page };
}

/**
 * Returns the href of the newest link, in a message to `to`, whose URL contains `urlPart`, as the
 * platform admin reads it in the demo mailbox. The mailbox polls, so this waits for the message to arrive.
 */
export async function linkFromMailbox(page: Page, to: string, urlPart: string): Promise<string> {
  const browser = page.context().browser();
  if (!browser) throw new Error("linkFromMailbox needs a page of a browser context");
  const mailbox = await openMailboxAsAdmin(browser);
  try {
    const link = mailbox.page
      .getByTestId("mail-message")
      .filter({ hasText: to })
      .getByRole("link")
      .filter({ hasText: urlPart })
      .first();
    await expect(link).toBeVisible();
    const href = await link.getAttribute("href");
    expect(href).toBeTruthy();
    return href!;
  } finally {
    await mailbox.context.close();
  }
}

export async function signInWithPassword(page: Page, email: string, password: string, landing: RegExp = /\/studios$/): Promise<void> {
  await page.goto("/signin");
  await page.getByLabel("E-mail", { exact: true }).fill(email);
  await page.getByLabel("Password", { exact: true }).fill(password);
  await page.getByRole("button", { name: "Sign in", exact: true }).click();
  await expect(page).toHaveURL(landing);
}

/**
 * Headers a browser's own fetch would carry: a page's request context sends the session cookie but
 * no Origin, and a cookie-authenticated write must come from the site itself (lib/auth/same-origin.ts).
 */
export function sameOrigin(page: Page): Record<string, string> {
  return { origin: new URL(page.url()).origin };
}

/** The demo engineer seeded by KICKDRIFT_DEMO=1 (server/seed.ts), and the studio they work in. */
export const DEMO_ENGINEER = { email: "tobiah@gannetyard.test", password: "crateslide-engineer", name: "Tobiah Lindqvist", studio: "Gannet Yard Games" };

/** Signs in as the demo engineer, opens their studio from the studio list, then `section` from the studio's navigation. */
export async function openDemoStudioSection(page: Page, section: string): Promise<void> {
  await signInWithPassword(page, DEMO_ENGINEER.email, DEMO_ENGINEER.password);
  await page.getByRole("link", { name: DEMO_ENGINEER.studio }).first().click();
  await page.getByRole("navigation", { name: "Studio" }).getByRole("link", { name: section }).click();
}

/** A point inside the map's plot at fractions (fx from the left, fy from the top), from the canvas's data-plot rectangle. */
export async function plotPoint(map: Locator, fx: number, fy: number): Promise<{ x: number; y: number }> {
  const plot = await map.getAttribute("data-plot");
  expect(plot, "the map publishes its plot rectangle once drawn").toBeTruthy();
  const [left, top, width, height] = plot!.split(",").map(Number);
  return { x: left + width * fx, y: top + height * fy };
}

/** Points the mouse at a point of the map's plot (fractions as in plotPoint); answers that point in viewport coordinates. */
export async function hoverMap(page: Page, map: Locator, fx: number, fy: number): Promise<{ x: number; y: number }> {
  // The mouse moves in viewport coordinates: bring the map into view first.
  await map.scrollIntoViewIfNeeded();
  const box = (await map.boundingBox())!;
  const point = await plotPoint(map, fx, fy);
  const at = { x: box.x + point.x, y: box.y + point.y };
  await page.mouse.move(at.x, at.y);
  return at;
}

/**
 * A snapshot file of three crates in a row (radii 0.3 m) with two mistakes: the first crate's mass
 * is negative, and the third stands 0.3 m from the second, pushed into it.
 */
export const CRATES_WITH_TWO_MISTAKES = {
  bodies: [
    { xM: 1, yM: 1, vxMPerS: 0, vyMPerS: 0, massKg: -25, radiusM: 0.3 },
    { xM: 3, yM: 1, vxMPerS: -1, vyMPerS: 0, massKg: 25, radiusM: 0.3 },
    { xM: 3.3, yM: 1, vxMPerS: 0, vyMPerS: 0, massKg: 25, radiusM: 0.3 },
  ],
};
