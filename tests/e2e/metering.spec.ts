import { expect, test } from "@playwright/test";
import Papa from "papaparse";
import { signInWithPassword } from "./helpers";

// The demo studio's engineer and finance member, seeded by KICKDRIFT_DEMO=1 (db/seed.ts).
const ENGINEER = { email: "tobiah@gannetyard.test", password: "crateslide-engineer" };
const FINANCE = { email: "ines@gannetyard.test", password: "crateslide-finance" };
const STUDIO = "Gannet Yard Games";

const msOf = (text: string | null) => Number((text ?? "").replace(/[^0-9]/g, ""));

test("an engineer reads the quote's ceiling and expected cost, runs the sweep and is billed at most the ceiling; finance sees the same figure on the billing page and in the ledger CSV", async ({ browser }) => {
  test.setTimeout(180_000);
  const engineerContext = await browser.newContext();
  const page = await engineerContext.newPage();
  await signInWithPassword(page, ENGINEER.email, ENGINEER.password);
  await page.getByRole("link", { name: STUDIO }).first().click();
  await expect(page.getByTestId("studio-name")).toHaveText(STUDIO);
  const studioPath = new URL(page.url()).pathname;
  await page.getByRole("navigation", { name: "Studio" }).getByRole("link", { name: "Sweeps" }).click();
  await page.getByRole("link", { name: "New sweep" }).click();
  await page.getByLabel(/How mass ratio changes penetration/).check();
  const name = `Metering check ${Date.now()}`;
  await page.locator("#spec-name").fill(name);

  // --- The quote: a ceiling and an expected figure, each in time and money, never "0.00 min".
  const quote = page.getByTestId("quote-panel");
  // The template's own quote (357 cells: its grid), not the builder's first template's one that shows
  // while it is on its way; nothing of it is cached in the demo studio, so its ceiling is above 0 ms.
  await expect(quote.getByTestId("quote-cells")).toHaveText("357");
  await expect(quote.getByTestId("quote-ceiling-in-ms")).toHaveText(/^[1-9][\d,]* ms$/);
  const ceilingMs = msOf(await quote.getByTestId("quote-ceiling-in-ms").textContent());
  const expectedMs = msOf(await quote.getByTestId("quote-expected-in-ms").textContent());
  expect(ceilingMs).toBeGreaterThan(0);
  expect(expectedMs).toBeGreaterThan(0);
  expect(expectedMs).toBeLessThanOrEqual(ceilingMs);
  await expect(quote.getByTestId("quote-ceiling-most-it-can-cost-")).toContainText("$");
  await expect(quote.getByTestId("quote-expected")).toContainText("$");
  for (const id of ["quote-ceiling-most-it-can-cost-", "quote-expected"]) await expect(quote.getByTestId(id)).not.toContainText("0.00 min");
  await page.screenshot({ path: test.info().outputPath("metering-quote.png"), fullPage: true });

  // --- Run it.
  await page.getByRole("button", { name: "Review and run" }).click();
  const confirm = page.getByTestId("confirm-sweep");
  await expect(confirm).toContainText("at most");
  await confirm.getByRole("button", { name: "Run sweep" }).click();
  await expect(page).toHaveURL(new RegExp(`${studioPath}/sweeps/(?!new$)[^/]+$`));
  const sweepId = new URL(page.url()).pathname.split("/").pop()!;
  await expect(page.getByTestId("sweep-status").first()).toHaveText("done", { timeout: 120_000 });

  // --- The sweep page: the quoted ceiling and expected figures as accepted, and the bill under the ceiling.
  await expect(page.getByTestId("sweep-ceiling")).toContainText(`${ceilingMs.toLocaleString("en")} ms`);
  await expect(page.getByTestId("sweep-expected")).toContainText(`${expectedMs.toLocaleString("en")} ms`);
  const billedText = (await page.getByTestId("sweep-billed").textContent()) ?? "";
  const billedMs = Number(/([\d,]+) ms$/.exec(billedText)![1].replace(/,/g, ""));
  expect(billedMs).toBeGreaterThan(0);
  expect(billedMs).toBeLessThanOrEqual(ceilingMs);
  await page.screenshot({ path: test.info().outputPath("metering-sweep.png"), fullPage: true });
  await engineerContext.close();

  // --- Finance: the billing page's per-sweep figure and the ledger CSV give the same milliseconds.
  const financeContext = await browser.newContext();
  const finance = await financeContext.newPage();
  await signInWithPassword(finance, FINANCE.email, FINANCE.password);
  await finance.goto(`${studioPath}/billing`);
  const row = finance.getByTestId(`usage-sweep-${sweepId}`);
  await expect(row).toContainText(name);
  await expect(row.getByTestId("usage-sweep-ms")).toHaveText(billedMs.toLocaleString("en"));
  const csvHref = await finance.getByRole("link", { name: "Download CSV" }).getAttribute("href");
  const csv = await (await finance.request.get(new URL(csvHref!, finance.url()).toString())).text();
  // Every CSV cell is quoted (lib/billing/queries.ts): parsed as a spreadsheet would.
  const rows = Papa.parse<Record<string, string>>(csv.trim(), { header: true }).data;
  let ledgerMs = 0;
  for (const row of rows) if (row.sweep_id === sweepId && row.kind === "usage") ledgerMs += Number(row.overage_ms) - Number(row.compute_ms);
  expect(ledgerMs).toBe(billedMs);
  await finance.screenshot({ path: test.info().outputPath("metering-billing.png"), fullPage: true });
  await financeContext.close();
});
