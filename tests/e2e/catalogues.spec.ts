import { readFileSync } from "node:fs";
import { CRATESLIDE_CATALOGUE_CSV } from "../../lib/catalogues/demo";
import { expect, openDemoStudioSection, test } from "./helpers";
import type { Page } from "@playwright/test";

/** Crateslide's catalogue with three mistakes: a mass that is a word, a restitution above 1, a name used twice. */
const WITH_MISTAKES = CRATESLIDE_CATALOGUE_CSV.replace("coin,0.6,", "coin,heavy,").replace("barrel,5,0.45,2,0.3", "barrel,5,0.45,2,1.7").replace("bumper,", "Crate,");

/** As the demo engineer, uploads a valid catalogue file on the Catalogues page and saves it as `name`: it opens as version 1. */
async function saveCatalogue(page: Page, file: { fileName: string; csv: string; objects: number; name: string }): Promise<void> {
  await openDemoStudioSection(page, "Catalogues");
  await page.getByTestId("catalogue-file").setInputFiles({ name: file.fileName, mimeType: "text/csv", buffer: Buffer.from(file.csv) });
  await expect(page.getByText(`${file.objects} objects, every row valid`)).toBeVisible();
  await page.getByLabel("Catalogue name").fill(file.name);
  await page.getByTestId("catalogue-save").click();
  await expect(page.getByTestId("catalogue-title")).toContainText(`${file.name} v1`);
}

test("an engineer uploads a catalogue with three mistakes, fixes them in the table, runs a check and opens the riskiest pair", async ({ page }) => {
  test.setTimeout(180_000);
  const pageErrors: string[] = [];
  page.on("pageerror", (error) => pageErrors.push(error.message));

  await openDemoStudioSection(page, "Catalogues");
  await expect(page.getByRole("heading", { name: "Upload a catalogue" })).toBeVisible();
  // The demo catalogue is listed already.
  await expect(page.getByTestId("catalogues-table")).toContainText("Crateslide objects");

  // --- The file with three mistakes: all three named at once with their rows; nothing can be saved yet.
  await page.getByTestId("catalogue-file").setInputFiles({ name: "crateslide-new.csv", mimeType: "text/csv", buffer: Buffer.from(WITH_MISTAKES) });
  const problems = page.getByTestId("catalogue-problem");
  await expect(problems).toHaveCount(3);
  await expect(problems.nth(0)).toHaveText('Row 3, mass_kg: not a number: "heavy" (mass in kg)');
  await expect(problems.nth(1)).toHaveText("Row 4, restitution: out of range: restitution must be > 0 and ≤ 1; got 1.7");
  await expect(problems.nth(2)).toHaveText('Row 6, name: duplicate name "Crate": row 2 already uses it (names are compared ignoring case)');
  await expect(page.getByLabel("Row 3, mass_kg")).toHaveAttribute("aria-invalid", "true");
  await expect(page.getByTestId("catalogue-save")).toBeDisabled();

  // --- Fixed in the table, one by one: the list shrinks as each is fixed.
  await page.getByLabel("Row 3, mass_kg").fill("0.6");
  await expect(problems).toHaveCount(2);
  await page.getByLabel("Row 4, restitution").fill("0.3");
  await page.getByLabel("Row 6, name").fill("bumper");
  await expect(problems).toHaveCount(0);
  await expect(page.getByText("5 objects, every row valid (fixed here; saved as CSV).")).toBeVisible();
  await page.getByLabel("Catalogue name").fill("Crateslide objects, spring build");
  await page.getByTestId("catalogue-save").click();

  // --- The saved version: its objects, its hash, the original file.
  await expect(page.getByTestId("catalogue-title")).toContainText("Crateslide objects, spring build v1");
  await expect(page.getByTestId("catalogue-objects")).toContainText("bumper");
  await expect(page.getByTestId("catalogue-hash")).toHaveText(/^[0-9a-f]{64}$/);
  await expect(page.getByRole("link", { name: "Download original file" })).toBeVisible();
  // "Original" is the file as chosen, mistakes and all; the corrected table is a download of its own.
  const originalDownload = page.waitForEvent("download");
  await page.getByTestId("download-original").click();
  const originalFile = await originalDownload;
  expect(originalFile.suggestedFilename()).toBe("crateslide-new.csv");
  expect(readFileSync((await originalFile.path()) as string, "utf8")).toBe(WITH_MISTAKES);
  await expect(page.getByTestId("download-corrected")).toBeVisible();

  // --- A check with the game's settings (the form's defaults: 60 Hz, 16 substeps, 1.5e6 N/m): quote, then run.
  await page.getByRole("button", { name: "Get quote" }).click();
  await expect(page.getByTestId("check-quote")).toContainText("180 cells");
  await page.getByTestId("check-run").click();
  await expect(page).toHaveURL(/\/checks\/chk_/);

  // --- The pair matrix fills; the summary names the pairs at risk and the recommendation.
  const matrix = page.getByTestId("pair-matrix");
  await expect(matrix.locator("button[data-verdict]")).toHaveCount(25);
  await expect(matrix.locator('button[data-verdict="pending"]')).toHaveCount(0, { timeout: 60_000 });
  const summary = page.getByTestId("check-summary");
  await expect(summary).toContainText("pairs are at risk");
  await expect(page.getByTestId("recommended-stiffness")).toHaveText("44,240 N/m");
  // The advice: the stiffness range at the game's 16 substeps (lib/catalogues/check.ts, adviseCheck).
  await expect(page.getByTestId("advice")).toHaveAttribute("data-advice-kind", "stiffness");
  await expect(page.getByTestId("advice-summary")).toContainText("at your 16 substeps");

  // --- Open the riskiest pair: its numbers and its stability map.
  const riskiest = (await summary.locator("strong").nth(1).textContent())!.trim();
  await page.getByTestId("open-riskiest").click();
  await expect(page.getByTestId("pair-title")).toHaveText(riskiest);
  // The pair's panel sits below the matrix: the button brings it into view.
  await expect(page.getByTestId("pair-title")).toBeInViewport();
  await expect(matrix.locator(`button[data-pair="${riskiest}"][aria-pressed="true"]`).first()).toBeVisible();
  await expect(page.getByTestId("pair-detail")).toContainText("Margin to the bound");
  // The pair's stability map: 6 closing speeds across, 2 impact offsets up, drawn (it publishes its plot rectangle).
  const map = page.getByRole("application", { name: `${riskiest}: verdict by closing speed and impact offset map, 6 by 2 cells, Closing speed across, Impact offset up.` });
  await expect(map).toBeVisible();
  await expect(map).toHaveAttribute("data-plot", /^[\d.]+,[\d.]+,[\d.]+,[\d.]+$/);

  // --- The pair matrix downloads as CSV for the game's config.
  const download = page.waitForEvent("download");
  await page.getByTestId("export-pairs-csv").click();
  const file = await download;
  expect(file.suggestedFilename()).toMatch(/^chk_.*-pairs\.csv$/);

  // --- The check is an ordinary sweep too: its page draws the map with the pair as one more axis.
  await page.getByRole("link", { name: /^sweep swp_/ }).click();
  await expect(page).toHaveURL(/\/sweeps\/swp_/);
  await expect(page.getByRole("application").first()).toHaveAttribute("data-plot", /^[\d.]+,/);

  expect(pageErrors).toEqual([]);
});

test("a catalogue that no stiffness or substep count can make stable ends in advice, not a dead end", async ({ page }) => {
  test.setTimeout(120_000);
  // A fast light pellet next to Crateslide's objects: no single stiffness at any of 1,000 substeps keeps
  // pellet × pellet within the overlap tolerance at 60 Hz (tests/unit/catalogues/advice.test.ts works the numbers).
  const withPellet = CRATESLIDE_CATALOGUE_CSV.replace("\r\n", "\r\npellet,0.01,0.01,40,0.5,loot\r\n");
  await saveCatalogue(page, { fileName: "crateslide-pellet.csv", csv: withPellet, objects: 6, name: "Crateslide objects, pellet build" });
  // The margin reads in percent, as on the sweep page's safe envelope.
  await expect(page.getByLabel("Margin [%]")).toHaveValue("80");
  await page.getByRole("button", { name: "Get quote" }).click();
  await expect(page.getByTestId("check-quote")).toBeVisible();
  await page.getByTestId("check-run").click();
  await expect(page).toHaveURL(/\/checks\/chk_/);

  const advice = page.getByTestId("advice");
  await expect(advice).toHaveAttribute("data-advice-kind", "objects");
  await expect(page.getByTestId("advice-summary")).toContainText("cannot be made stable at 60 Hz with any stiffness or substep count");
  await expect(page.getByTestId("advice-summary")).toContainText("pellet: lower its top speed from 40 to at most");
  await expect(page.getByTestId("advice-details")).toContainText("pellet × pellet cannot be made stable at 60 Hz: at 80 m/s it needs at least");
  await expect(page.getByTestId("check-summary")).toContainText("Recommendation (margin 80 %: ω·h ≤ 0.4)");
  // The old dead end said "none" twice and stopped there.
  await expect(page.getByTestId("check-summary")).not.toContainText("none.");
});

test("an engineer checks a catalogue with friction: the largest k_t/k, the substeps, and which objects slide on the game's slope", async ({ page }) => {
  test.setTimeout(180_000);
  const pageErrors: string[] = [];
  page.on("pageerror", (error) => pageErrors.push(error.message));
  // Crateslide's objects give friction coefficients (the puck glides at μ 0.05, the bumper grips at 0.8).
  await saveCatalogue(page, { fileName: "crateslide-friction.csv", csv: CRATESLIDE_CATALOGUE_CSV, objects: 5, name: "Crateslide objects, friction build" });
  await expect(page.getByTestId("catalogue-objects")).toContainText("0.05");

  // The friction settings appear because the objects give μ: k_t as large as the normal spring, a 20° ramp.
  await expect(page.getByTestId("check-friction-settings")).toBeVisible();
  await page.getByLabel("Tangential stiffness ratio k_t/k").fill("1");
  await page.getByLabel("Steepest slope [°]").fill("20");
  await page.getByRole("button", { name: "Get quote" }).click();
  await expect(page.getByTestId("check-quote")).toBeVisible();
  await page.getByTestId("check-run").click();
  await expect(page).toHaveURL(/\/checks\/chk_/);

  const friction = page.getByTestId("friction-check");
  await expect(friction).toBeVisible();
  // Two coins decide: tangential mass (0.6/3)/2 = 0.1 kg, so k_t/k ≤ 0.1·(0.4·960)²/1.5e6 = 0.00983 at 16 substeps
  // (ω_t·h ≤ 2(1 − 0.8), the symplectic Euler bound with the check's margin; Hairer, Lubich & Wanner 2006), and at
  // k_t/k = 1 they need ⌈√(1.5e6/0.1)/(60·0.4)⌉ = 162 substeps.
  await expect(page.getByTestId("friction-largest-ratio")).toHaveText("0.00983");
  await expect(friction).toContainText("coin × coin decides");
  await expect(page.getByTestId("friction-substeps")).toHaveText("162");
  await expect(page.getByTestId("friction-summary")).toContainText("raise the substeps to 162");
  // tan 20° = 0.364: the puck (μ 0.05) slides, the bumper (μ 0.8) holds (Kleppner & Kolenkow 2014, ch. 2).
  await expect(friction.locator('[data-contact="slider puck on the floor"]')).toContainText("slides");
  await expect(friction.locator('[data-contact="bumper on the floor"]')).toContainText("holds");

  const download = page.waitForEvent("download");
  await page.getByTestId("export-friction-csv").click();
  const file = await download;
  expect(file.suggestedFilename()).toMatch(/^chk_.*-friction\.csv$/);
  const text = readFileSync((await file.path())!, "utf8");
  expect(text.split("\r\n")[0]).toMatch(/^contact,kind,object_a,object_b,friction,rolling_resistance,/);
  expect(text).toContain("\r\nslider puck on the floor,floor,slider puck,,0.05,");
  expect(pageErrors).toEqual([]);
});
