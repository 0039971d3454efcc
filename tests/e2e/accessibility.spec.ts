import { type Page } from "@playwright/test";
import { expect, signInWithPassword, test } from "./helpers";

// The demo owner seeded by KICKDRIFT_DEMO=1 (server/seed.ts).
const DEMO_OWNER = { email: "maren@gannetyard.test", password: "crateslide-owner" };

/** Form controls a screen reader would announce without a name: no <label>, no aria-label(ledby). */
async function unlabelledControls(page: Page): Promise<string[]> {
  return page.evaluate(() =>
    Array.from(document.querySelectorAll<HTMLInputElement | HTMLSelectElement | HTMLTextAreaElement>("input, select, textarea"))
      .filter((control) => control.type !== "hidden")
      .filter((control) => (control.labels?.length ?? 0) === 0 && !control.getAttribute("aria-label") && !control.getAttribute("aria-labelledby"))
      .map((control) => control.outerHTML.slice(0, 120)),
  );
}

test("every form control on the public pages has a label, and keyboard focus is visible", async ({ page }) => {
  for (const path of ["/signin", "/signup", "/reset", "/reset/some-token"]) {
    await page.goto(path);
    await expect(page.locator("form").first()).toBeVisible();
    expect(await unlabelledControls(page), path).toEqual([]);
  }

  await page.goto("/signin");
  // The header's sign-in links appear once the session check has answered; wait for them, or they
  // can land between the focusable elements mid-keystroke and take the Tab meant for the e-mail field.
  await expect(page.getByRole("banner").getByRole("link", { name: "Create account" })).toBeVisible();
  const email = page.getByLabel("E-mail", { exact: true });
  await email.focus();
  await page.keyboard.press("Shift+Tab");
  await page.keyboard.press("Tab");
  await expect(email).toBeFocused();
  const outline = await email.evaluate((element) => {
    const style = getComputedStyle(element);
    return { style: style.outlineStyle, width: parseFloat(style.outlineWidth) };
  });
  expect(outline.style).not.toBe("none");
  expect(outline.width).toBeGreaterThanOrEqual(2);
});

test("every form control on the studio pages has a label", async ({ page }) => {
  await signInWithPassword(page, DEMO_OWNER.email, DEMO_OWNER.password);
  expect(await unlabelledControls(page), "/studios").toEqual([]);
  await page.getByRole("link", { name: /Gannet Yard Games/ }).click();
  await expect(page).toHaveURL(/\/studios\/[^/]+$/);
  const studioPath = new URL(page.url()).pathname;
  await page.goto(`${studioPath}/members`);
  // The per-member role pickers appear with the member list.
  await expect(page.getByTestId("members-table").getByRole("combobox").first()).toBeVisible();
  expect(await unlabelledControls(page), "members").toEqual([]);
  await page.goto(`${studioPath}/tokens`);
  await expect(page.locator("form").first()).toBeVisible();
  expect(await unlabelledControls(page), "tokens").toEqual([]);
  await page.goto(`${studioPath}/catalogues`);
  await expect(page.getByTestId("catalogue-file")).toBeVisible();
  expect(await unlabelledControls(page), "catalogues").toEqual([]);
  await page.getByRole("link", { name: "Crateslide objects" }).first().click();
  await expect(page.getByRole("button", { name: "Get quote" })).toBeVisible();
  expect(await unlabelledControls(page), "catalogue").toEqual([]);
  await page.goto(`${studioPath}/snapshots`);
  await expect(page.getByTestId("snapshot-file")).toBeVisible();
  expect(await unlabelledControls(page), "snapshots").toEqual([]);
});
