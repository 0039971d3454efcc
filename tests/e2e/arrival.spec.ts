import type { Page } from "@playwright/test";
import { expect, signInWithPassword, test } from "./helpers";

// The demo's watch sweep (lib/demo/watch.ts) starts at the demo engineer's FIRST sign-in on the
// server and is paced over about a minute. This file runs before every other spec that signs in as
// the demo engineer (Playwright runs the files in name order on one server: accessibility,
// admin-quotas, arrival, billing-overdue, billing, catalogues, …), and it waits until the sweep is
// done, so the sweep's small bill has landed before billing.spec.ts reads the balance.
const ENGINEER = { email: "tobiah@gannetyard.test", password: "crateslide-engineer" };
const STUDIO = "Gannet Yard Games";
const WATCH_SWEEP = "Crateslide cargo bin: 32 kegs tipped into the loading bin, stiffness × frame rate";
const CELLS = 144;

/** Cells done on the sweep page ("n / 144 (p%)"). */
async function cellsDone(page: Page): Promise<number> {
  const text = await page.getByTestId("sweep-cells-done").innerText();
  return Number(text.split("/")[0].replaceAll(",", "").trim());
}

test("the engineer signs in to the demo, finds a sweep running on the studio home and watches it finish on its page", async ({ page }) => {
  // A minute of paced steps after the sign-in, plus page loads on a loaded machine.
  test.setTimeout(360_000);
  await signInWithPassword(page, ENGINEER.email, ENGINEER.password);
  await page.getByRole("link", { name: STUDIO }).first().click();
  await expect(page.getByTestId("studio-home")).toBeVisible({ timeout: 60_000 });

  // The studio home: the sweep under "Running now" with its progress and why it moves in steps.
  const item = page.getByTestId("home-running-item").filter({ hasText: WATCH_SWEEP });
  await expect(item).toBeVisible();
  await expect(item.getByTestId("home-running-progress")).toHaveText(new RegExp(`^(queued|running|paused) · \\d+ / ${CELLS} cells`));
  await expect(item.getByTestId("home-running-reason")).toContainText("demo pace", { timeout: 30_000 });
  await expect(item.getByRole("meter")).toBeVisible();

  // Its page: progress moves on without a reload, the map fills in, and it finishes.
  await item.getByRole("link", { name: WATCH_SWEEP }).click();
  await expect(page.getByTestId("sweep-name")).toHaveText(WATCH_SWEEP, { timeout: 60_000 });
  let first = 0;
  await expect.poll(async () => (first = await cellsDone(page)), { timeout: 120_000 }).toBeGreaterThan(0);
  expect(first).toBeLessThan(CELLS);
  await expect(page.getByRole("application").first()).toHaveAttribute("data-plot", /.+/);
  await page.screenshot({ path: "docs/screens/watch-sweep-running.png", fullPage: true });
  await expect.poll(() => cellsDone(page), { timeout: 120_000 }).toBeGreaterThan(first);
  await expect(page.getByTestId("sweep-status").first()).toHaveText("done", { timeout: 240_000 });
  await expect(page.getByTestId("sweep-cells-done")).toHaveText(`${CELLS} / ${CELLS} (100%)`);
  await expect(page.getByTestId("sweep-reason")).toHaveCount(0);
  // Soft contacts sink deep, a middle band is stable, stiff contacts at low frame rates explode.
  await expect(page.getByTestId("verdict-counts")).toContainText(/Stable: [1-9]/);
  await expect(page.getByTestId("verdict-counts")).toContainText(/Exploded: [1-9]/);
  await page.screenshot({ path: "docs/screens/watch-sweep-done.png", fullPage: true });

  // Back home: no longer running, listed with the latest finished sweeps.
  await page.getByRole("navigation", { name: "Studio" }).getByRole("link", { name: "Overview" }).click();
  await expect(page.getByTestId("home-latest")).toContainText(WATCH_SWEEP);
  await expect(page.getByTestId("home-running-item").filter({ hasText: WATCH_SWEEP })).toHaveCount(0);
});
