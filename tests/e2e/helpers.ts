import { test as base, expect, type Browser, type BrowserContext, type Page } from "@playwright/test";

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
