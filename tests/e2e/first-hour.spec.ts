import { expect, test, type Browser, type Page } from "@playwright/test";
import { hoverMap, signInWithPassword } from "./helpers";

// The demo people seeded by KICKDRIFT_DEMO=1 (server/seed.ts); their studio's work is computed by the
// server's own queue runner just after start-up (lib/demo/results.ts).
const STUDIO = "Gannet Yard Games";
const PEOPLE = {
  owner: { email: "maren@gannetyard.test", password: "crateslide-owner" },
  engineer: { email: "tobiah@gannetyard.test", password: "crateslide-engineer" },
  finance: { email: "ines@gannetyard.test", password: "crateslide-finance" },
} as const;
// The seeded frame-rate sweep by its exact name: other tests add sweeps whose names start the same way
// (a one-cell re-run, a dated run of the template).
const FRAME_RATE_SWEEP = "Reedmarsh bumper boats: boat against the dock buoy, stiffness × frame step × integrator";

/** Signs in and opens the studio from the studio list: the first click lands on the studio home. */
async function openHome(page: Page, who: keyof typeof PEOPLE): Promise<string> {
  await signInWithPassword(page, PEOPLE[who].email, PEOPLE[who].password);
  await page.getByRole("link", { name: STUDIO }).first().click();
  await expect(page.getByTestId("studio-home")).toBeVisible();
  return new URL(page.url()).pathname;
}

/**
 * The seeded sweeps finish in the background; the home polls while any runs. Waits for them (a hang
 * guard). Run on its own, this file's engineer is the server's first engineer sign-in, which starts
 * the demo's watch sweep (lib/demo/watch.ts, about a minute, paced): the guard allows for it.
 */
async function waitForSeededWork(page: Page): Promise<void> {
  await expect(async () => {
    await page.reload();
    // The demo's six sweeps are done (the card lists the latest of them). The card renders once the
    // overview has loaded after the reload: wait for a fifth link rather than count at once.
    await expect(page.getByTestId("home-latest-link").nth(4)).toBeAttached({ timeout: 15_000 });
    await expect(page.getByTestId("home-running")).toHaveCount(0, { timeout: 2_000 });
  }).toPass({ timeout: 240_000 });
}

test("an engineer lands on the studio home, sees finished sweeps and opens a map with exploded cells in two clicks; the builder takes 60 Hz", async ({ page }) => {
  test.setTimeout(420_000);
  const pageErrors: string[] = [];
  page.on("pageerror", (error) => pageErrors.push(error.message));
  const home = await openHome(page, "engineer");
  await waitForSeededWork(page);
  // Finished sweeps with their verdicts as a bar, a catalogue check with pairs at risk, compute used.
  await expect(page.getByTestId("verdict-bar").first()).toBeVisible();
  await expect(page.getByTestId("home-pairs-at-risk").first()).toContainText("pairs at risk");
  await expect(page.getByTestId("home-month-used")).not.toHaveText("0.00 min");
  await expect(page.getByTestId("start-here")).toHaveCount(0);
  await expect(page.getByTestId("results-caution")).toContainText("not a basis for safety-critical engineering");

  // Second click: a finished sweep whose verdict bar shows exploded cells opens on its map.
  await page.getByTestId("home-latest").getByRole("listitem").filter({ hasText: /Exploded \d/ }).first().getByTestId("home-latest-link").click();
  await expect(page).toHaveURL(new RegExp(`${home}/sweeps/[^/]+$`));
  await expect(page.getByTestId("verdict-counts")).toContainText(/Exploded: [1-9]/);
  await expect(page.getByRole("application").first()).toHaveAttribute("data-plot", /.+/);
  await expect(page.getByTestId("help-panel")).toBeVisible();

  // The frame-rate sweep's map reads its frame-step axis in Hz.
  await page.getByRole("navigation", { name: "Studio" }).getByRole("link", { name: "Sweeps" }).click();
  await page.getByLabel("Name contains").fill("Reedmarsh");
  await page.getByRole("link", { name: FRAME_RATE_SWEEP, exact: true }).first().click();
  await expect(page.getByTestId("verdict-counts")).toContainText(/Exploded: [1-9]/);
  const map = page.getByRole("application").first();
  await expect(map).toHaveAttribute("data-plot", /.+/);
  // The map's frame-step axis reads in Hz: hover the top-right cell (stiffest contact, 30 Hz).
  await hoverMap(page, map, 0.99, 0.02);
  const tooltip = page.getByRole("tooltip");
  await expect(tooltip).toContainText("frame step dt: 30 Hz (1/30 s · 33.33 ms)");
  await expect(tooltip).toContainText("Exploded");

  // The builder: the frame step and the frame-step axis in the game's units.
  await page.goto(`${home}/sweeps/new`);
  const dt = page.locator("#spec-scenario-dtS");
  await expect(dt).toHaveValue("60 Hz");
  await dt.fill("120 Hz");
  await expect(page.getByTestId("spec-scenario-dtS-reading")).toHaveText("= 1/120 s · 8.33 ms");
  await dt.fill("60");
  await expect(page.locator("#spec-scenario-dtS-error")).toContainText("needs a unit: Hz, s or ms");
  await dt.fill("60 Hz");
  await expect(page.getByTestId("spec-scenario-dtS-reading")).toHaveText("= 1/60 s · 16.7 ms");
  const list = page.locator("#axis-1-values");
  await expect(list).toHaveValue("120, 60, 30 Hz");
  await list.fill("30, sixty, 120 Hz");
  await expect(page.locator("#axis-1-values-error")).toHaveText(/^2nd value "sixty" is not a frame step/);
  await list.fill("1/240, 1/120, 1/60");
  await expect(page.locator("#axis-1-values-error")).toHaveCount(0);
  await expect(page.getByTestId("axis-1-values-reading")).toContainText("1/240 s · 4.17 ms; 1/120 s · 8.33 ms; 1/60 s · 16.7 ms");
  await expect(page.getByTestId("quote-panel").getByTestId("quote-cells")).toHaveText("150");
  // Switching templates with edits asks first; dismissing keeps the edits.
  let asked = "";
  page.once("dialog", (dialog) => {
    asked = dialog.message();
    void dialog.dismiss();
  });
  await page.getByLabel(/Speed at which small fast objects tunnel/).click();
  await expect.poll(() => asked).toContain("Your edits to this spec will be replaced");
  await expect(list).toHaveValue("1/240, 1/120, 1/60");
  expect(pageErrors).toEqual([]);
});

async function homeShots(browser: Browser, who: keyof typeof PEOPLE): Promise<Page> {
  const context = await browser.newContext({ viewport: { width: 1440, height: 900 } });
  const page = await context.newPage();
  await openHome(page, who);
  await waitForSeededWork(page);
  await expect(page.getByTestId("home-trend").locator("svg").first()).toBeVisible();
  await page.screenshot({ path: `docs/screens/studio-home-${who}-1440x900.png`, fullPage: true });
  await page.setViewportSize({ width: 390, height: 844 });
  await page.screenshot({ path: `docs/screens/studio-home-${who}-390x844.png`, fullPage: true });
  await page.setViewportSize({ width: 1440, height: 900 });
  return page;
}

test("finance sees the next invoice and usage with data; every role's studio home reads at desktop and phone width", async ({ browser }) => {
  test.setTimeout(420_000);
  const finance = await homeShots(browser, "finance");
  await expect(finance.getByTestId("home-next-invoice")).toHaveText(/^\$\d+\.\d{2}$/);
  await finance.getByRole("link", { name: "Billing and usage →" }).click();
  await expect(finance.getByTestId("usage-by-day").locator(".recharts-bar-rectangle").first()).toBeVisible();
  await expect(finance.getByTestId("usage-by-sweep").locator(".recharts-bar-rectangle").first()).toBeVisible();
  // Three past months of billing (lib/demo/history.ts): an overage invoice per month, the second one
  // 80 minutes = 4,800,000 ms × 0.00015 ¢ = $7.20 (arithmetic), paid; the two packs' own paid invoices.
  await finance.getByRole("link", { name: "Invoices", exact: true }).click();
  const rows = finance.getByTestId("invoices-table").getByRole("row");
  const overage = rows.filter({ hasText: "Overage" });
  await expect(overage.filter({ hasText: "$7.20" })).toHaveCount(1);
  await expect(overage.filter({ hasText: "$7.20" })).toContainText("paid");
  expect(await overage.count()).toBeGreaterThanOrEqual(3);
  // Each row's period starts in its own month (dates read YYYY-MM-DD). The whole date is matched: an
  // invoice number such as "B40B5930-0007" also holds "dddd-dd".
  const months = new Set((await overage.allInnerTexts()).map((text) => /(\d{4}-\d{2})-\d{2}/.exec(text)?.[1]));
  expect(months.size).toBeGreaterThanOrEqual(3);
  expect(await rows.filter({ hasText: "Pack purchase" }).filter({ hasText: "$45.00" }).count()).toBeGreaterThanOrEqual(2);
  const owner = await homeShots(browser, "owner");
  await expect(owner.getByRole("heading", { name: "API tokens" })).toBeVisible();
  const engineer = await homeShots(browser, "engineer");
  await expect(engineer.getByTestId("home-next-invoice")).toHaveCount(0);
});
