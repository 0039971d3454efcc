import { readFile } from "node:fs/promises";
import { type Page } from "@playwright/test";
import { DEMO_ENGINEER, expect, hoverMap, sameOrigin, signInWithPassword, test } from "./helpers";

const DEMO_OWNER = { email: "maren@gannetyard.test", password: "crateslide-owner" };

async function openStudio(page: Page): Promise<string> {
  await page.getByRole("link", { name: DEMO_ENGINEER.studio }).first().click();
  await expect(page.getByTestId("studio-name")).toHaveText(DEMO_ENGINEER.studio);
  return new URL(page.url()).pathname;
}

test("an engineer builds a sweep from a template, watches it run, reads a cell and exports the safe envelope", async ({ page }) => {
  test.setTimeout(180_000);
  const pageErrors: string[] = [];
  page.on("pageerror", (error) => pageErrors.push(error.message));
  // Every read of a sweep's cells the page makes: the sweep's API path and its `after` cursor.
  const cellReads: { path: string; after: string | null }[] = [];
  page.on("request", (request) => {
    const url = new URL(request.url());
    if (/^\/api\/v1\/studios\/[^/]+\/sweeps\/[^/]+\/cells$/.test(url.pathname)) cellReads.push({ path: url.pathname, after: url.searchParams.get("after") });
  });

  await signInWithPassword(page, DEMO_ENGINEER.email, DEMO_ENGINEER.password);
  const studioPath = await openStudio(page);

  // --- Sweeps tab → New sweep → the frame-rate template.
  await page.getByRole("navigation", { name: "Studio" }).getByRole("link", { name: "Sweeps" }).click();
  await expect(page).toHaveURL(`${studioPath}/sweeps`);
  await page.getByRole("link", { name: "New sweep" }).click();
  await expect(page).toHaveURL(`${studioPath}/sweeps/new`);
  await page.getByLabel(/Stiffness a frame rate can carry/).check();
  // Every scenario field shows its unit beside the label.
  // The frame step reads in the game's units and takes them as typed.
  await expect(page.locator("label[for='spec-scenario-dtS']")).toContainText("[Hz, s or ms]");
  await expect(page.locator("#spec-scenario-dtS")).toHaveValue("60 Hz");
  await expect(page.getByTestId("spec-scenario-dtS-reading")).toHaveText("= 1/60 s · 16.7 ms");
  await expect(page.locator("label[for='spec-scenario-contact-stiffness']")).toContainText("[N/m]");

  // --- A bad value gets an inline message naming the field's limit, and no quote; fixing it brings the quote back.
  await page.getByLabel(/^Substeps per frame/).fill("0");
  await expect(page.locator("#spec-scenario-substeps-error")).toContainText("1");
  await expect(page.getByRole("button", { name: "Review and run" })).toBeDisabled();
  await page.getByLabel(/^Substeps per frame/).fill("4");

  // --- The quote: 25 stiffnesses × 3 frame steps × 2 integrators = 150 cells.
  const quote = page.getByTestId("quote-panel");
  await expect(quote.getByTestId("quote-cells")).toHaveText("150");
  await expect(quote.getByTestId("quote-expected-in-ms")).toHaveText(/^[\d,]+ ms$/);
  await expect(quote.getByTestId("quote-balance-now")).toHaveText(/^[\d,]+\.\d{2} min$/);
  await page.screenshot({ path: test.info().outputPath("sweep-builder.png"), fullPage: true });

  // --- Review, confirm, run.
  await page.getByRole("button", { name: "Review and run" }).click();
  const confirm = page.getByTestId("confirm-sweep");
  // 150 cells in all. Another test may have run the same template already: its cells are served from
  // the store and not billed again, and the dialog says how many.
  await expect(confirm).toContainText("cells to run");
  const counts = /(?:([\d,]+) cells, ([\d,]+) already computed by earlier sweeps \(not billed again\); )?([\d,]+) cells to run/.exec((await confirm.textContent()) ?? "");
  expect(counts, "the dialog names the cells to run").not.toBeNull();
  const figure = (text: string | undefined) => Number((text ?? "0").replaceAll(",", ""));
  if (counts![1] !== undefined) expect(figure(counts![1])).toBe(150);
  expect(figure(counts![2]) + figure(counts![3])).toBe(150);
  await confirm.getByRole("button", { name: "Run sweep" }).click();
  await expect(page).toHaveURL(new RegExp(`${studioPath}/sweeps/(?!new$)[^/]+$`));
  const sweepPath = new URL(page.url()).pathname;

  // --- The progress bar reaches 100 % and the sweep is done.
  const progress = page.getByTestId("sweep-progress");
  await expect(progress).toHaveAttribute("aria-valuenow", "100", { timeout: 90_000 });
  await expect(page.getByTestId("sweep-status").first()).toHaveText("done");
  await expect(page.getByTestId("sweep-cells-done")).toContainText("150 / 150");
  await expect(page.getByTestId("sweep-billed")).toHaveText(/ ms$/);

  // --- Hover a cell: the tooltip shows its values. Top right = the stiffest contact at 30 Hz with symplectic Euler.
  const map = page.getByRole("application").first();
  await expect(map).toHaveAttribute("data-plot", /.+/);
  const topRight = await hoverMap(page, map, 0.99, 0.02);
  const tooltip = page.getByRole("tooltip");
  await expect(tooltip).toContainText("contact stiffness k");
  await expect(tooltip).toContainText("frame step dt: 30 Hz (1/30 s · 33.33 ms)");
  await expect(tooltip).toContainText("Exploded");

  // While it ran, the page asked only for the cells that changed: every read names the cursor it
  // holds, from 0 upwards (never the whole list again).
  const reads = cellReads.filter((read) => read.path === `/api/v1${sweepPath}/cells`);
  expect(reads.length).toBeGreaterThan(0);
  expect(reads[0].after).toBe("0");
  const afters = reads.map((read) => read.after ?? "");
  for (const after of afters) expect(after).toMatch(/^[0-9]+$/);
  for (let i = 1; i < afters.length; i++) expect(BigInt(afters[i])).toBeGreaterThanOrEqual(BigInt(afters[i - 1]));

  // --- Open that exploded cell: its energy grows far beyond the start.
  await page.mouse.click(topRight.x, topRight.y);
  await expect(page).toHaveURL(new RegExp(`${sweepPath}/cells/\\d+$`));
  const cellPath = new URL(page.url()).pathname;
  await expect(page.getByTestId("cell-verdict")).toHaveText("Exploded");
  await expect(page.getByTestId("energy-ratio")).not.toBeEmpty();
  const ratio = Number(await page.getByTestId("energy-ratio").textContent());
  // The engine stops a run once energy exceeds blowUpEnergyFactor (default 1000) × the initial energy (lib/physics defaults).
  expect(ratio).toBeGreaterThan(100);
  await expect(page.getByRole("button", { name: "Re-run at a finer dt" })).toBeVisible();
  await page.screenshot({ path: test.info().outputPath("sweep-cell.png"), fullPage: true });

  // --- Back on the map: export the safe envelope of stiffness over dt as JSON.
  await page.getByRole("link", { name: /Back to the stability map/ }).click();
  await expect(page).toHaveURL(sweepPath);
  await page.getByLabel(/^Margin/).fill("20");
  await expect(page.getByTestId("envelope-table")).toBeVisible();
  const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "Envelope (JSON)" }).click()]);
  const file = await download.path();
  const body = JSON.parse(await readFile(file, "utf8")) as { envelope: { xPath: string; yPath: string; margin: number; bound: string; rows: { x: number; yLimit: number | null }[] } };
  expect(body.envelope.xPath).toBe("contact.stiffness");
  expect(body.envelope.yPath).toBe("dtS");
  expect(body.envelope.margin).toBeCloseTo(0.2, 12);
  expect(body.envelope.bound).toBe("max");
  expect(body.envelope.rows).toHaveLength(25);
  // The soft end of the stiffness axis has no stable cell at all (overlap too deep), so its limit is null.
  expect(body.envelope.rows[0].yLimit).toBeNull();
  await page.screenshot({ path: test.info().outputPath("sweep-map.png"), fullPage: true });

  // --- The exploded cell again, re-run at a quarter of its dt: a new one-cell sweep that runs to the end.
  await page.goto(cellPath);
  await page.getByRole("button", { name: "Re-run at a finer dt" }).click();
  // A re-run is quoted and confirmed like any sweep (issue #22).
  await page.getByTestId("confirm-rerun").getByRole("button", { name: "Start the re-run" }).click();
  await expect(page).toHaveURL(new RegExp(`${studioPath}/sweeps/(?!new$)[^/]+$`));
  expect(new URL(page.url()).pathname).not.toBe(sweepPath);
  await expect(page.getByTestId("sweep-progress")).toHaveAttribute("aria-valuenow", "100", { timeout: 60_000 });
  await expect(page.getByTestId("sweep-cells-done")).toContainText("1 / 1");

  expect(pageErrors).toEqual([]);
});

test("a finance member sees sweeps but gets the 403 page for the builder", async ({ browser }) => {
  // The demo finance member's password is changed by password-reset.spec.ts, so the owner makes the
  // demo engineer a finance member for this test and gives the role back afterwards.
  const ownerContext = await browser.newContext();
  const owner = await ownerContext.newPage();
  await signInWithPassword(owner, DEMO_OWNER.email, DEMO_OWNER.password);
  const studioPath = await openStudio(owner);
  const membersApi = `/api/v1${studioPath}/members`;
  const members = (await (await owner.request.get(membersApi)).json()) as { members: { userId: string; email: string }[] };
  const engineer = members.members.find((member) => member.email === DEMO_ENGINEER.email)!;
  const setRole = async (role: string) => {
    const response = await owner.request.patch(`${membersApi}/${engineer.userId}`, { data: { role }, headers: sameOrigin(owner) });
    expect(response.status()).toBe(200);
  };
  await setRole("finance");
  try {
    const context = await browser.newContext();
    const page = await context.newPage();
    await signInWithPassword(page, DEMO_ENGINEER.email, DEMO_ENGINEER.password);
    await page.goto(`${studioPath}/sweeps`);
    await expect(page.getByRole("heading", { name: "Sweeps" })).toBeVisible();
    await expect(page.getByTestId("sweeps-table")).toBeVisible();
    await expect(page.getByRole("link", { name: "New sweep" })).toHaveCount(0);
    const response = await page.goto(`${studioPath}/sweeps/new`);
    expect(response?.status()).toBe(403);
    await context.close();
  } finally {
    await setRole("engineer");
    await ownerContext.close();
  }
});
