import { expect, linkFromMailbox, signInWithPassword, test } from "./helpers";

// The demo finance member seeded by KICKDRIFT_DEMO=1 (server/seed.ts); no other test signs in as her.
const FINANCE = { email: "ines@gannetyard.test", password: "crateslide-finance" };

test("a forgotten password is replaced through the mailed link, which works only once", async ({ page }) => {
  await page.goto("/signin");
  await page.getByRole("link", { name: "Forgot your password?" }).click();
  await expect(page).toHaveURL(/\/reset$/);
  await page.getByLabel("E-mail", { exact: true }).fill(FINANCE.email);
  await page.getByRole("button", { name: "E-mail me a reset link" }).click();
  await expect(page.getByText(`If an account exists for ${FINANCE.email}`)).toBeVisible();

  const resetLink = await linkFromMailbox(page, FINANCE.email, "/reset/");
  const newPassword = "ledger-on-ice-2026";

  await page.goto(resetLink);
  await page.getByLabel("New password", { exact: true }).fill(newPassword);
  await page.getByLabel("Repeat the new password").fill(`${newPassword}x`);
  await page.getByRole("button", { name: "Set new password" }).click();
  await expect(page.getByText("The two passwords differ.")).toBeVisible();

  await page.getByLabel("Repeat the new password").fill(newPassword);
  await page.getByRole("button", { name: "Set new password" }).click();
  await expect(page.getByText("Your password has been changed.")).toBeVisible();

  await signInWithPassword(page, FINANCE.email, newPassword);
  await expect(page.getByTestId("studio-list")).toContainText("Gannet Yard Games");

  // The old password no longer works.
  await page.context().clearCookies();
  await page.goto("/signin");
  await page.getByLabel("E-mail", { exact: true }).fill(FINANCE.email);
  await page.getByLabel("Password", { exact: true }).fill(FINANCE.password);
  await page.getByRole("button", { name: "Sign in", exact: true }).click();
  await expect(page.getByText("Invalid e-mail or password.")).toBeVisible();

  // The same link a second time is refused with a way to ask for a new one.
  await page.goto(resetLink);
  await page.getByLabel("New password", { exact: true }).fill("another-long-password");
  await page.getByLabel("Repeat the new password").fill("another-long-password");
  await page.getByRole("button", { name: "Set new password" }).click();
  await expect(page.getByRole("link", { name: "Ask for a new link" })).toBeVisible();
  await expect(page.getByText("Your password has been changed.")).toHaveCount(0);
});
