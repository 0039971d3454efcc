import { expect, test } from "@playwright/test";

// playwright.config.ts starts a second server one port up, with SMTP_URL set.
const smtpConfiguredBaseURL = `http://localhost:${Number(process.env.KD_E2E_PORT ?? 3100) + 1}`;

test("the local mailbox exists while the mail fake stands in for SMTP", async ({ page }) => {
  const response = await page.goto("/mail");
  expect(response?.status()).toBe(200);
  await expect(page.getByRole("heading", { name: "Mailbox", level: 1 })).toBeVisible();
  await expect(page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Mailbox" })).toBeVisible();
});

test("with SMTP configured there is no mailbox page, API or nav link", async ({ page, request }) => {
  const response = await page.goto(`${smtpConfiguredBaseURL}/mail`);
  expect(response?.status()).toBe(404);
  await expect(page.getByTestId("not-found")).toBeVisible();

  const api = await request.get(`${smtpConfiguredBaseURL}/api/v1/dev/mail`);
  expect(api.status()).toBe(404);

  for (const path of ["/", "/signin"]) {
    await page.goto(`${smtpConfiguredBaseURL}${path}`);
    await expect(page.getByRole("link", { name: "Kickdrift home" })).toBeVisible();
    await expect(page.getByRole("link", { name: "Mailbox" })).toHaveCount(0);
  }
});
