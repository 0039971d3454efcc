import { expect, test } from "@playwright/test";
import Papa from "papaparse";
import { signInWithPassword } from "./helpers";

// The demo studio's engineer and finance member, seeded by KICKDRIFT_DEMO=1 (server/seed.ts).
const ENGINEER = { email: "tobiah@gannetyard.test", password: "crateslide-engineer" };
const FINANCE = { email: "ines@gannetyard.test", password: "crateslide-finance" };
const STUDIO = "Gannet Yard Games";

const msOf = (text: string | null) => Number((text ?? "").replace(/[^0-9]/g, ""));

test("an engineer reads the quote's ceiling and expected cost, runs the sweep and is billed at most the ceiling; finance sees the same figure on the billing page, in the sweep's ledger row and its chunks, and in the ledger exports (both units named)", async ({ browser }) => {
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
  // Both units named in the export's header: the stored ones and the ones on screen.
  expect(csv.split("\r\n")[0]).toContain("compute_ms,compute_minutes,overage_ms,overage_minutes,amount_cents,amount_usd");
  await finance.screenshot({ path: test.info().outputPath("metering-billing.png"), fullPage: true });

  // --- The ledger holds the sweep as one row (not one "0.00" row per chunk), its chunks on demand.
  const group = finance.getByTestId(`ledger-group-sweep:${sweepId}`);
  await expect(group).toHaveCount(1);
  await expect(group).toContainText(name);
  const chunkCount = Number((await group.getByTestId("ledger-group-chunks").innerText()).replace(/[^0-9]/g, ""));
  expect(chunkCount).toBeGreaterThan(0);
  await expect(finance.getByTestId("ledger-table").getByText(sweepId)).toHaveCount(0);
  await group.getByRole("button", { name: "Show chunks" }).click();
  const chunks = finance.getByTestId("ledger-chunks");
  await expect(chunks.getByTestId("ledger-chunk")).toHaveCount(chunkCount);
  let chunkMs = 0;
  for (const cell of await chunks.getByTestId("ledger-chunk-ms").allInnerTexts()) chunkMs += msOf(cell);
  for (const cell of await chunks.getByTestId("ledger-chunk-overage-ms").allInnerTexts()) chunkMs += msOf(cell);
  expect(chunkMs).toBe(billedMs);
  await chunks.scrollIntoViewIfNeeded();
  await finance.screenshot({ path: "docs/screens/billing-ledger-by-sweep.png" });
  await group.getByRole("button", { name: "Hide chunks" }).click();
  await expect(chunks).toHaveCount(0);

  // --- The per-sweep export: one row for the sweep, its ms and minutes both present and agreeing.
  const bySweepHref = await finance.getByRole("link", { name: "CSV by sweep" }).getAttribute("href");
  const bySweep = Papa.parse<Record<string, string>>((await (await finance.request.get(new URL(bySweepHref!, finance.url()).toString())).text()).trim(), { header: true }).data;
  const sweepRows = bySweep.filter((r) => r.sweep_id === sweepId);
  expect(sweepRows).toHaveLength(1);
  expect(Number(sweepRows[0].overage_ms) - Number(sweepRows[0].compute_ms)).toBe(billedMs);
  // minutes = ms / 60,000, shown to two decimals (arithmetic; the page's rounding).
  expect(Number(sweepRows[0].compute_minutes)).toBeCloseTo(Number(sweepRows[0].compute_ms) / 60_000, 2);
  const jsonHref = await finance.getByRole("link", { name: "Download JSON" }).getAttribute("href");
  const json = (await (await finance.request.get(new URL(jsonHref!, finance.url()).toString())).json()) as { units: Record<string, string> };
  expect(Object.keys(json.units)).toEqual(expect.arrayContaining(["compute_ms", "compute_minutes", "amount_cents", "amount_usd"]));

  // --- The usage-by-sweep chart: labelled by the sweep's name (never its id), the unit on the axis,
  // and no two labels overlapping.
  const chart = finance.getByTestId("usage-by-sweep");
  await chart.scrollIntoViewIfNeeded();
  await expect(chart.getByTestId("bar-label").filter({ hasText: name.slice(0, 20) })).toHaveCount(1);
  await expect(chart).not.toContainText(sweepId);
  await expect(chart).toContainText("compute minutes");
  const boxes = (await chart.getByTestId("bar-label").evaluateAll((els) => els.map((el) => el.getBoundingClientRect().toJSON() as { top: number; bottom: number }))).sort((a, b) => a.top - b.top);
  expect(boxes.length).toBeGreaterThan(0);
  for (let i = 1; i < boxes.length; i++) expect(boxes[i].top, `label ${i + 1} starts below label ${i}`).toBeGreaterThanOrEqual(boxes[i - 1].bottom);
  await finance.screenshot({ path: "docs/screens/billing-usage-by-sweep.png" });
  await financeContext.close();
});
