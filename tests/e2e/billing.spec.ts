import { readFile } from "node:fs/promises";
import { type Page } from "@playwright/test";
import { expect, openMailboxAsAdmin, signInWithPassword, test } from "./helpers";

// The demo sign-ins seeded by KICKDRIFT_DEMO=1 (server/seed.ts prints them at start).
const OWNER = { email: "maren@gannetyard.test", password: "crateslide-owner" };
const FINANCE = { email: "ines@gannetyard.test", password: "crateslide-finance" };

async function openBilling(page: Page): Promise<string> {
  await page.getByRole("link", { name: "Gannet Yard Games" }).first().click();
  await page.getByRole("link", { name: "Billing", exact: true }).click();
  await expect(page).toHaveURL(/\/studios\/[^/]+\/billing$/);
  await expect(page.getByText("Prices before tax; tax handling is out of scope.").first()).toBeVisible();
  return new URL(page.url()).pathname.split("/")[2];
}

const minutesOn = async (page: Page) => Number((await page.getByTestId("balance-minutes").innerText()).replaceAll(",", ""));

test("the demo owner sets the billing address and tax ID and buys a pack; a declined card credits nothing; finance downloads the invoices CSV and opens the invoice's page and PDF", async ({ browser }) => {
  // Two sign-ins, two payment pages, a hosted invoice and a download: more steps than the 90 s default
  // carries on a loaded machine.
  test.setTimeout(240_000);
  const ownerContext = await browser.newContext();
  const owner = await ownerContext.newPage();
  await signInWithPassword(owner, OWNER.email, OWNER.password);
  const studioId = await openBilling(owner);
  await expect(owner.getByTestId("balance-minutes")).toHaveText(/\d/);
  const before = await minutesOn(owner);

  // --- The owner fills in the billing details printed on invoices; a bad tax ID is refused naming the limit.
  await owner.getByRole("button", { name: "Edit billing details" }).click();
  await owner.getByLabel("Address line 1").fill("7 Slipway Lane");
  await owner.getByLabel("Postal code").fill("EH6 6QW");
  await owner.getByLabel("City").fill("Leith");
  await owner.getByLabel("Country (two-letter code, e.g. DE)").fill("GB");
  await owner.getByLabel("Tax ID (optional)").fill("GB<123>");
  await owner.getByRole("button", { name: "Save billing details" }).click();
  await expect(owner.getByText("taxId may use letters, digits, spaces and . - / only")).toBeVisible();
  await owner.getByLabel("Tax ID (optional)").fill("GB 123 4567 89");
  await owner.getByRole("button", { name: "Save billing details" }).click();
  await expect(owner.getByTestId("billing-details")).toContainText("7 Slipway Lane, EH6 6QW Leith, GB");
  await expect(owner.getByTestId("billing-details")).toContainText("GB 123 4567 89");

  // --- A declined card: the payment page says so, and nothing is credited.
  await owner.getByRole("button", { name: "Buy Tap-out" }).click();
  await expect(owner).toHaveURL(/\/c\/pay\/cs_test_/);
  await expect(owner.getByRole("heading", { name: "Pay 9.00 USD" })).toBeVisible();
  await owner.getByLabel("Card number").fill("4000 0000 0000 0002");
  await owner.getByRole("button", { name: /Pay/ }).click();
  await expect(owner.getByRole("alert")).toContainText("declined");
  await owner.screenshot({ path: test.info().outputPath("payment-declined.png"), fullPage: true });
  await owner.goto(`/studios/${studioId}/billing`);
  await expect(owner.getByTestId("balance-minutes")).toHaveText(/\d/);
  expect(await minutesOn(owner)).toBe(before);

  // --- A good card: back on the billing page, the balance rises by the pack's 120 minutes.
  await owner.getByRole("button", { name: "Buy Tap-out" }).click();
  await expect(owner).toHaveURL(/\/c\/pay\/cs_test_/);
  await owner.getByLabel("Card number").fill("4242 4242 4242 4242");
  await owner.getByRole("button", { name: /Pay/ }).click();
  await expect(owner).toHaveURL(new RegExp(`/studios/${studioId}/billing\\?checkout=success`));
  await expect(owner.getByText("Payment received.")).toBeVisible();
  await expect(owner.getByTestId("balance-minutes")).toHaveText((before + 120).toFixed(2).replace(/\B(?=(\d{3})+(?!\d))/g, ","));
  await expect(owner.getByTestId("ledger-table")).toContainText("Tap-out pack");
  await owner.screenshot({ path: test.info().outputPath("billing-after-purchase.png"), fullPage: true });

  // --- The purchase has its own paid invoice; its hosted page shows the address and tax ID.
  await owner.goto(`/studios/${studioId}/invoices`);
  const packRow = owner.getByTestId("invoices-table").getByRole("row").filter({ hasText: "Pack purchase" }).filter({ hasText: "$9.00" }).first();
  await expect(async () => {
    await owner.reload();
    await expect(packRow).toBeVisible({ timeout: 1_000 });
  }).toPass({ timeout: 20_000 });
  await expect(packRow).toContainText("paid");
  const invoiceNumber = (await packRow.getByRole("link").first().innerText()).trim();
  const [hosted] = await Promise.all([owner.waitForEvent("popup"), packRow.getByRole("link", { name: `View invoice ${invoiceNumber} online` }).click()]);
  await expect(hosted.getByRole("heading", { name: `Invoice ${invoiceNumber}` })).toBeVisible();
  await expect(hosted.getByTestId("invoice-bill-to")).toContainText("7 Slipway Lane");
  await expect(hosted.getByTestId("invoice-bill-to")).toContainText("Tax ID: GB 123 4567 89");
  await expect(hosted.getByText("Total")).toBeVisible();
  await hosted.screenshot({ path: test.info().outputPath("hosted-invoice.png"), fullPage: true });
  await hosted.close();
  const receiptMailbox = await openMailboxAsAdmin(browser);
  await expect(receiptMailbox.page.getByTestId("mail-message").filter({ hasText: "Receipt: Tap-out pack for Gannet Yard Games" }).filter({ hasText: OWNER.email })).toHaveCount(1);
  // The invoice goes to finance as well as the buyer, with the links to its page and PDF.
  await expect(receiptMailbox.page.getByTestId("mail-message").filter({ hasText: `Invoice ${invoiceNumber} for Gannet Yard Games` }).filter({ hasText: FINANCE.email })).toHaveCount(1);
  await expect(receiptMailbox.page.getByTestId("mail-message").filter({ hasText: `Invoice ${invoiceNumber} for Gannet Yard Games` }).filter({ hasText: FINANCE.email })).toContainText("/pdf");
  await receiptMailbox.context.close();
  await ownerContext.close();

  // --- Finance downloads the invoices CSV and opens the PDF from the Invoices page.
  const financeContext = await browser.newContext();
  const finance = await financeContext.newPage();
  await signInWithPassword(finance, FINANCE.email, FINANCE.password);
  await finance.goto(`/studios/${studioId}/invoices`);
  await expect(finance.getByTestId("invoices-table")).toContainText(invoiceNumber);
  const [download] = await Promise.all([finance.waitForEvent("download"), finance.getByRole("link", { name: "Download CSV" }).click()]);
  expect(download.suggestedFilename()).toBe(`invoices-${studioId}.csv`);
  const csv = await readFile(await download.path(), "utf8");
  const [header, ...rows] = csv.trim().split("\r\n");
  expect(header.split(",")).toEqual(expect.arrayContaining(["total_cents", "total_amount", "hosted_invoice_url", "invoice_pdf_url"]));
  const line = rows.find((r) => r.includes(`"${invoiceNumber}"`));
  expect(line).toContain('"900","9.00"');
  const pdfHref = await finance.getByRole("link", { name: `Download invoice ${invoiceNumber} as PDF` }).getAttribute("href");
  expect(pdfHref).toMatch(/\/i\/in_[A-Za-z0-9]+\/pdf$/);
  const pdf = await finance.request.get(pdfHref!);
  expect(pdf.status()).toBe(200);
  expect(pdf.headers()["content-type"]).toBe("application/pdf");
  expect((await pdf.body()).subarray(0, 5).toString("latin1")).toBe("%PDF-");
  await finance.getByTestId("invoices-table").getByRole("link", { name: invoiceNumber, exact: true }).click();
  await expect(finance).toHaveURL(new RegExp(`/studios/${studioId}/invoices/in_`));
  await expect(finance.getByTestId("reconciliation")).toContainText("Pack purchase");
  await expect(finance.getByTestId("invoice-status")).toHaveText("paid");
  await finance.screenshot({ path: test.info().outputPath("invoice-pack.png"), fullPage: true });
  await financeContext.close();
});
