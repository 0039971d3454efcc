import { CREDIT_PACKS, formatPriceCents } from "../../lib/billing/packs";
import { expect, test } from "./helpers";

const CAUTION = "Simulation results are numerical estimates for tuning game physics, not a basis for safety-critical engineering.";

test("the landing page shows every credit pack's price before tax, and the caution", async ({ page }) => {
  await page.goto("/");
  await expect(page.getByRole("heading", { level: 1 })).toBeVisible();

  const packs = page.getByTestId("credit-packs");
  for (const pack of CREDIT_PACKS) {
    const card = packs.getByRole("listitem").filter({ hasText: pack.name });
    await expect(card).toContainText(formatPriceCents(pack.priceCents));
    await expect(card).toContainText(`${pack.minutes.toLocaleString("en-US")} compute minutes`);
    await expect(card).toContainText("before tax");
  }
  await expect(page.getByText("Prices before tax; tax handling is out of scope.").first()).toBeVisible();

  const footer = page.getByRole("contentinfo");
  await expect(footer).toContainText(CAUTION);
  await expect(footer).toContainText("Prices before tax; tax handling is out of scope.");

  await page.screenshot({ path: test.info().outputPath("landing-light.png"), fullPage: true });
});

test("the colour-mode toggle switches to dark, and the choice survives a reload", async ({ page }) => {
  await page.goto("/");
  const html = page.locator("html");
  const paper = () => page.evaluate(() => getComputedStyle(document.body).backgroundColor);
  const lightBackground = await paper();

  await page.getByTestId("theme-toggle").click();
  await expect(html).toHaveAttribute("data-theme", "dark");
  await expect.poll(paper).not.toBe(lightBackground);
  const darkBackground = await paper();

  await page.reload();
  await expect(html).toHaveAttribute("data-theme", "dark");
  expect(await paper()).toBe(darkBackground);
  await page.screenshot({ path: test.info().outputPath("landing-dark.png"), fullPage: true });

  await page.getByTestId("theme-toggle").click();
  await expect(html).toHaveAttribute("data-theme", "light");
  await expect.poll(paper).toBe(lightBackground);
});

test("a visitor's operating-system dark preference is followed without a stored choice", async ({ browser }) => {
  const context = await browser.newContext({ colorScheme: "dark" });
  const page = await context.newPage();
  await page.goto("/");
  await expect(page.getByTestId("theme-toggle")).toHaveAttribute("aria-pressed", "true");
  const background = await page.evaluate(() => getComputedStyle(document.body).backgroundColor);
  // The dark paper token of app/globals.css (#0e121a).
  expect(background).toBe("rgb(14, 18, 26)");
  await context.close();
});
