import { expect, test, type Browser, type Locator, type Page } from "@playwright/test";

// The demo people seeded by KICKDRIFT_DEMO=1 (db/seed.ts); their studio's work is computed by the
// server's own queue runner just after start-up (lib/demo/results.ts).
const STUDIO = "Gannet Yard Games";
const PEOPLE = {
  owner: { email: "maren@gannetyard.test", password: "crateslide-owner" },
  engineer: { email: "tobiah@gannetyard.test", password: "crateslide-engineer" },
  finance: { email: "ines@gannetyard.test", password: "crateslide-finance" },
} as const;
const FRAME_RATE_SWEEP = /^Reedmarsh bumper boats/;

async function plotPoint(map: Locator, fx: number, fy: number): Promise<{ x: number; y: number }> {
  const plot = await map.getAttribute("data-plot");
  expect(plot, "the map publishes its plot rectangle once drawn").toBeTruthy();
  const [left, top, width, height] = plot!.split(",").map(Number);
  return { x: left + width * fx, y: top + height * fy };
}

/** Signs in and opens the studio from the studio list: the first click lands on the studio home. */
async function openHome(page: Page, who: keyof typeof PEOPLE): Promise<string> {
  // As signInWithPassword (helpers.ts), with a longer hang guard: the demo's large sweep keeps the
  // server's threads busy, and on a loaded machine a sign-in answered in 15 s once took longer.
  await page.goto("/signin");
  await page.getByLabel("E-mail", { exact: true }).fill(PEOPLE[who].email);
  await page.getByLabel("Password", { exact: true }).fill(PEOPLE[who].password);
  await page.getByRole("button", { name: "Sign in", exact: true }).click();
  await expect(page).toHaveURL(/\/studios$/, { timeout: 60_000 });
  await page.getByRole("link", { name: STUDIO }).first().click();
  await expect(page.getByTestId("studio-home")).toBeVisible();
  return new URL(page.url()).pathname;
}

/** The large demo sweep left running for minutes after start-up (lib/demo/results.ts). */
const RUNNING_SWEEP = "Jellybean Jar at the fill line";

/**
 * The seeded sweeps finish in the background (all but the large one, which runs for minutes); the
 * home polls while any runs. Waits for them (a hang guard).
 */
async function waitForSeededWork(page: Page): Promise<void> {
  await expect(async () => {
    await page.reload();
    // The demo's finished sweeps are done (the card lists the latest of them) and the check has its
    // pairs at risk. The card renders once the overview has loaded after the reload: wait for a
    // fifth link rather than count at once.
    await expect(page.getByTestId("home-latest-link").nth(4)).toBeAttached({ timeout: 15_000 });
    await expect(page.getByTestId("home-pairs-at-risk").first()).toBeAttached({ timeout: 2_000 });
  }).toPass({ timeout: 180_000 });
}

/** "running · 312 / 2,400 cells" with at least one cell done (the large sweep may be paused for a visitor's work). */
const RUNNING_PROGRESS = /^(running|paused) · [1-9][\d,]* \/ 2,400 cells/;

test("an engineer lands on the studio home, sees finished sweeps and opens a map with exploded cells in two clicks; the builder takes 60 Hz", async ({ page }) => {
  test.setTimeout(240_000);
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
  // A sweep still running, with its progress; its own page shows the cells landing.
  const running = page.getByTestId("home-running-item").filter({ hasText: RUNNING_SWEEP });
  await expect(running.getByTestId("home-running-progress")).toHaveText(RUNNING_PROGRESS, { timeout: 60_000 });
  await running.getByTestId("home-running-link").click();
  // A hang guard for a loaded machine (load average 40 once): the navigation took longer than 15 s.
  await expect(page).toHaveURL(new RegExp(`${home}/sweeps/[^/]+$`), { timeout: 60_000 });
  const progress = page.getByTestId("sweep-progress");
  await expect(progress).toHaveAttribute("aria-valuetext", /^\d+% \([1-9]\d* of 2400 cells\)$/);
  const firstReading = await progress.getAttribute("aria-valuetext");
  // Live: the page polls and the count moves on as chunks land (no reload).
  await expect.poll(() => progress.getAttribute("aria-valuetext"), { timeout: 120_000 }).not.toBe(firstReading);
  await page.goto(home);
  await waitForSeededWork(page);

  // Second click: a finished sweep whose verdict bar shows exploded cells opens on its map.
  await page.getByTestId("home-latest").getByRole("listitem").filter({ hasText: /Exploded \d/ }).first().getByTestId("home-latest-link").click();
  await expect(page).toHaveURL(new RegExp(`${home}/sweeps/[^/]+$`));
  await expect(page.getByTestId("verdict-counts")).toContainText(/Exploded: [1-9]/);
  await expect(page.getByRole("application").first()).toHaveAttribute("data-plot", /.+/);
  await expect(page.getByTestId("help-panel")).toBeVisible();

  // The frame-rate sweep's map reads its frame-step axis in Hz.
  await page.getByRole("navigation", { name: "Studio" }).getByRole("link", { name: "Sweeps" }).click();
  await page.getByRole("link", { name: FRAME_RATE_SWEEP }).first().click();
  await expect(page.getByTestId("verdict-counts")).toContainText(/Exploded: [1-9]/);
  const map = page.getByRole("application").first();
  await expect(map).toHaveAttribute("data-plot", /.+/);
  // The map's frame-step axis reads in Hz: hover the top-right cell (stiffest contact, 30 Hz).
  // The mouse moves in viewport coordinates: bring the map into view first.
  await map.scrollIntoViewIfNeeded();
  const box = (await map.boundingBox())!;
  const topRight = await plotPoint(map, 0.99, 0.02);
  await page.mouse.move(box.x + topRight.x, box.y + topRight.y);
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
  // A hang guard for a loaded machine: three roles, two widths each, while the demo's large sweep runs.
  test.setTimeout(480_000);
  const finance = await homeShots(browser, "finance");
  await expect(finance.getByTestId("home-next-invoice")).toHaveText(/^\$\d+\.\d{2}$/);
  await finance.getByRole("link", { name: "Billing and usage →" }).click();
  await expect(finance.getByTestId("usage-by-day").locator(".recharts-bar-rectangle").first()).toBeVisible();
  await expect(finance.getByTestId("usage-by-sweep").locator(".recharts-bar-rectangle").first()).toBeVisible();
  const owner = await homeShots(browser, "owner");
  await expect(owner.getByRole("heading", { name: "API tokens" })).toBeVisible();
  const engineer = await homeShots(browser, "engineer");
  await expect(engineer.getByTestId("home-next-invoice")).toHaveCount(0);
});
