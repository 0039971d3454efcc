import { expect, type Page } from "@playwright/test";

/** A fresh address per run, so a test never depends on what an earlier run left in a reused database. */
export function uniqueEmail(label: string): string {
  return `${label}.${Date.now().toString(36)}${Math.floor(Math.random() * 1e6).toString(36)}@driftwood-pucks.test`;
}

/**
 * Opens /mail and returns the href of the newest link, in a message to `to`, whose URL contains `urlPart`.
 * The mailbox polls, so this waits for the message to arrive.
 */
export async function linkFromMailbox(page: Page, to: string, urlPart: string): Promise<string> {
  await page.goto("/mail");
  const link = page
    .getByTestId("mail-message")
    .filter({ hasText: to })
    .getByRole("link")
    .filter({ hasText: urlPart })
    .first();
  await expect(link).toBeVisible();
  const href = await link.getAttribute("href");
  expect(href).toBeTruthy();
  return href!;
}

export async function signInWithPassword(page: Page, email: string, password: string): Promise<void> {
  await page.goto("/signin");
  await page.getByLabel("E-mail", { exact: true }).fill(email);
  await page.getByLabel("Password", { exact: true }).fill(password);
  await page.getByRole("button", { name: "Sign in", exact: true }).click();
  await expect(page).toHaveURL(/\/studios$/);
}
