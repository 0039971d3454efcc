/**
 * Issue 22, tried as a new user would: the stability map read with colour removed (each verdict's
 * cells told apart by symbol in a grayscale screenshot), the map's exports with their title block,
 * a re-run at a finer dt that asks for its quote and shows the before/after comparison, duplicate
 * and edit, and the sweeps list searched and filtered by creator. Screens land in docs/screens/.
 */
import { readFile } from "node:fs/promises";
import type { Page } from "@playwright/test";
import { mapAxisFor, mapCellIndices } from "@/components/sweeps/sweep-map-data";
import { cellRect, mapGeometry } from "@/lib/charts/scales";
import type { SweepAxisView } from "@/lib/sweeps/sweep-view";
import { DEMO_ENGINEER, expect, signInWithPassword, test } from "./helpers";

const STIFFNESS_SWEEP = "Reedmarsh bumper boats: boat against the dock buoy, stiffness × frame step × integrator";

async function openStudio(page: Page): Promise<string> {
  await page.getByRole("link", { name: DEMO_ENGINEER.studio }).first().click();
  await expect(page.getByTestId("studio-name")).toHaveText(DEMO_ENGINEER.studio);
  return new URL(page.url()).pathname;
}

async function openSweep(page: Page, studioPath: string, name: string): Promise<string> {
  await page.goto(`${studioPath}/sweeps`);
  await page.getByLabel("Name contains").fill("Reedmarsh");
  await page.getByRole("link", { name, exact: true }).first().click();
  await expect(page.getByTestId("sweep-name")).toHaveText(name);
  await expect(page.getByTestId("sweep-status")).toHaveText("done", { timeout: 120_000 });
  return new URL(page.url()).pathname;
}

/** Grey levels (0–255) of a PNG, decoded by the browser itself. */
async function greyPixels(page: Page, png: Buffer): Promise<{ width: number; height: number; grey: number[] }> {
  return page.evaluate(async (base64) => {
    const image = new Image();
    image.src = `data:image/png;base64,${base64}`;
    await image.decode();
    const canvas = document.createElement("canvas");
    canvas.width = image.naturalWidth;
    canvas.height = image.naturalHeight;
    const ctx = canvas.getContext("2d")!;
    ctx.drawImage(image, 0, 0);
    const data = ctx.getImageData(0, 0, canvas.width, canvas.height).data;
    const grey: number[] = [];
    // Rec. 709 luma weights (ITU-R BT.709-6, item 3.2), what a grayscale filter keeps.
    for (let i = 0; i < data.length; i += 4) grey.push(Math.round(0.2126 * data[i] + 0.7152 * data[i + 1] + 0.0722 * data[i + 2]));
    return { width: canvas.width, height: canvas.height, grey };
  }, png.toString("base64"));
}

/**
 * The symbol in one cell with its fill removed: an 8 × 8 mask of where the cell's grey level
 * departs from the cell's own median by more than 24 levels (the glyph's strokes), so two verdicts
 * with the same lightness would still differ here only through their glyphs.
 */
function glyphMask(image: { width: number; grey: number[] }, left: number, top: number, size: number): boolean[] {
  const values: number[] = [];
  for (let y = 0; y < size; y++) for (let x = 0; x < size; x++) values.push(image.grey[(top + y) * image.width + left + x]);
  const median = [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)];
  const mask = new Array<boolean>(64).fill(false);
  for (let y = 0; y < size; y++) for (let x = 0; x < size; x++) if (Math.abs(values[y * size + x] - median) > 24) mask[Math.floor((y * 8) / size) * 8 + Math.floor((x * 8) / size)] = true;
  return mask;
}

const differences = (a: boolean[], b: boolean[]) => a.reduce((n, value, i) => n + (value !== b[i] ? 1 : 0), 0);

test("the stability map reads in grey: each verdict's cells carry their own symbol; exports carry a title block", async ({ page }) => {
  test.setTimeout(240_000);
  await page.setViewportSize({ width: 1440, height: 900 });
  await signInWithPassword(page, DEMO_ENGINEER.email, DEMO_ENGINEER.password);
  const studioPath = await openStudio(page);
  await openSweep(page, studioPath, STIFFNESS_SWEEP);
  await page.locator("#map-mode").selectOption("single");
  const map = page.locator("canvas[aria-roledescription='stability map']").first();
  await expect(map).toHaveAttribute("data-plot", /\d/);

  // Which verdict each map cell holds, and where the cell is: the page's own axis choice and slice,
  // the sweep's cells, and the cell edges the map draws with (lib/charts/scales.ts). The frame-step
  // axis (1/120 … 1/30 s, linear) has cells of unequal height, so cell centres are not evenly spaced.
  const apiPath = `/api/v1${new URL(page.url()).pathname}`;
  const sweep = (await (await page.request.get(apiPath)).json()) as { sweep: { axes: SweepAxisView[] } };
  const cells = (await (await page.request.get(`${apiPath}/cells`)).json()) as { cells: { index: number; verdict: string }[] };
  const axes = sweep.sweep.axes;
  const xAxis = Number(await page.locator("#map-x").inputValue());
  const yAxis = Number(await page.locator("#map-y").inputValue());
  const slice: number[] = [];
  for (let i = 0; i < axes.length; i++) {
    const select = page.locator(`#map-slice-${i}`);
    slice.push((await select.count()) > 0 ? Number(await select.inputValue()) : 0);
  }
  const indices = mapCellIndices(axes, { x: xAxis, y: yAxis, slice });
  const columns = axes[xAxis].values.length;
  const rows = axes[yAxis].values.length;
  const verdictOf = new Map(cells.cells.map((cell) => [cell.index, cell.verdict]));

  // The map with its colour removed, as a colour-blind reader or a grey printout sees it.
  await map.evaluate((canvas) => ((canvas as HTMLCanvasElement).style.filter = "grayscale(1)"));
  const shot = await map.screenshot();
  await page.screenshot({ path: "docs/screens/map-grayscale.png" });
  const image = await greyPixels(page, shot);
  const [left, top, width, height] = (await map.getAttribute("data-plot"))!.split(",").map(Number);
  const geometry = mapGeometry({ left, top, width, height }, mapAxisFor(axes[xAxis]), mapAxisFor(axes[yAxis]));
  const scale = image.width / (await map.boundingBox())!.width;
  const masks = new Map<string, boolean[][]>();
  for (let row = 0; row < rows; row++) {
    for (let column = 0; column < columns; column++) {
      const verdict = verdictOf.get(indices[row * columns + column]);
      if (!verdict) continue;
      const rect = cellRect(geometry, column, row);
      // The glyph is drawn at the cell's centre, 0.64 of its smaller side across (render.ts): a window
      // of 0.8 of the smaller side holds it and stays inside the cell.
      const size = Math.floor(Math.min(Math.abs(rect.width), Math.abs(rect.height)) * 0.8 * scale);
      const cx = (rect.left + rect.width / 2) * scale;
      const cy = (rect.top + rect.height / 2) * scale;
      const mask = glyphMask(image, Math.round(cx - size / 2), Math.round(cy - size / 2), size);
      masks.set(verdict, [...(masks.get(verdict) ?? []), mask]);
    }
  }
  const verdicts = [...masks.keys()];
  expect(verdicts.length, `verdicts on this map: ${verdicts.join(", ")}`).toBeGreaterThanOrEqual(2);
  // Each verdict's symbol: the medoid of its cells' masks (the overlay curves and their labels cross
  // some cells, so a cell's mask may carry a line besides its glyph).
  const spread = (mask: boolean[], list: boolean[][]) => list.reduce((n, other) => n + differences(mask, other), 0);
  const medoid = (list: boolean[][]) => list.reduce((best, mask) => (spread(mask, list) < spread(best, list) ? mask : best));
  const symbols = new Map([...masks].map(([verdict, list]) => [verdict, medoid(list)]));
  // At least half the cells of a verdict show that verdict's symbol, give or take an edge (the rest may be crossed by a curve or its label) …
  for (const [verdict, list] of masks) {
    const alike = list.filter((mask) => differences(mask, symbols.get(verdict)!) <= 8).length;
    expect(alike / list.length, `${verdict}: ${alike} of ${list.length} cells show its symbol`).toBeGreaterThanOrEqual(0.5);
  }
  // … and any two verdicts' symbols differ by more than the cells of one verdict differ among
  // themselves (signal above noise): at least twice the larger of the two verdicts' median
  // cell-to-symbol difference, plus one, and never fewer than 3 of the 64 bins. A dot against a bar
  // differs in about 6 bins at this size; one glyph drawn twice differs in 0–2.
  const noise = new Map([...masks].map(([verdict, list]) => {
    const distances = list.map((mask) => differences(mask, symbols.get(verdict)!)).sort((x, y) => x - y);
    return [verdict, distances[Math.floor(distances.length / 2)]] as const;
  }));
  for (let a = 0; a < verdicts.length; a++) {
    for (let b = a + 1; b < verdicts.length; b++) {
      const needed = Math.max(3, 2 * Math.max(noise.get(verdicts[a])!, noise.get(verdicts[b])!) + 1);
      const apart = differences(symbols.get(verdicts[a])!, symbols.get(verdicts[b])!);
      expect(apart, `${verdicts[a]} vs ${verdicts[b]}: ${apart} bins apart; cells of one verdict differ by ${noise.get(verdicts[a])} and ${noise.get(verdicts[b])}`).toBeGreaterThanOrEqual(needed);
    }
  }
  await map.evaluate((canvas) => ((canvas as HTMLCanvasElement).style.filter = ""));

  // The energy error on its symmetric-log scale, clipped to percentiles, with the scale named.
  await page.locator("#map-show").selectOption("maxEnergyErrorRel");
  await expect(page.locator("#map-colour-range")).toHaveValue("p1-99");
  await page.screenshot({ path: "docs/screens/map-energy-symlog.png" });

  // Both exports, each with its title block.
  const svgDownload = page.waitForEvent("download");
  await page.getByRole("button", { name: "Save SVG" }).click();
  const svg = await readFile((await (await svgDownload).path())!, "utf8");
  expect(svg).toContain("<svg");
  expect(svg).toContain(`Sweep: ${STIFFNESS_SWEEP.replace(/&/g, "&amp;")}`);
  // The axis is named as the builder names the parameter ("contact stiffness k", lib/sweeps/parameters.ts).
  expect(svg).toMatch(/Across: contact stiffness k/);
  expect(svg).toContain("Showing: largest energy error (relative)");
  expect(svg).toContain("Tolerances: energy drift");
  expect(svg).toMatch(/Exported \d{4}-\d{2}-\d{2} \d{2}:\d{2} UTC/);
  expect(svg).toContain("Symmetric log");
  const pngDownload = page.waitForEvent("download");
  await page.getByRole("button", { name: "Save PNG" }).click();
  const png = await readFile((await (await pngDownload).path())!);
  expect(png.subarray(1, 4).toString("latin1")).toBe("PNG");
});

test("a re-run at a finer dt asks for its quote, then compares itself with the cell it re-runs", async ({ page }) => {
  test.setTimeout(240_000);
  await page.setViewportSize({ width: 1440, height: 900 });
  await signInWithPassword(page, DEMO_ENGINEER.email, DEMO_ENGINEER.password);
  const studioPath = await openStudio(page);
  const sweepPath = await openSweep(page, studioPath, STIFFNESS_SWEEP);
  await page.goto(`${sweepPath}/cells/0`);
  await expect(page.getByTestId("cell-verdict")).toBeVisible();
  // The time series open framed on the contacts, with the overview brush to zoom out.
  await expect(page.getByTestId("series-window")).toContainText(/the contacts|the whole run/);
  await expect(page.getByTestId("series-overview")).toBeVisible();
  await page.getByRole("button", { name: "Whole run" }).click();
  await expect(page.getByTestId("series-window")).toContainText("the whole run");
  await page.screenshot({ path: "docs/screens/cell-page.png", fullPage: true });

  const before = (await (await page.request.get(`/api/v1${studioPath}/sweeps?pageSize=100`)).json()) as { total: number };
  await page.getByLabel(/Finer dt factor/).fill("0.5");
  await page.getByRole("button", { name: "Re-run at a finer dt" }).click();
  const confirm = page.getByTestId("confirm-rerun");
  await expect(confirm).toBeVisible();
  await expect(confirm.getByTestId("rerun-quote")).toContainText(/expected .* at most/);
  // Nothing has started yet: the quote is only a quote.
  const stillBefore = (await (await page.request.get(`/api/v1${studioPath}/sweeps?pageSize=100`)).json()) as { total: number };
  expect(stillBefore.total).toBe(before.total);
  await page.screenshot({ path: "docs/screens/rerun-quote.png" });
  await confirm.getByRole("button", { name: "Start the re-run" }).click();

  await expect(page.getByTestId("sweep-status")).toHaveText("done", { timeout: 120_000 });
  const table = page.getByTestId("rerun-comparison");
  await expect(table).toBeVisible();
  await expect(table.locator("[data-row='verdict'] td").nth(0)).not.toBeEmpty();
  await expect(table.locator("[data-row='dt'] td").nth(1)).toContainText("Hz");
  await expect(page.getByText("Cell 0:")).toHaveCount(0);
  await expect(page.getByText("Save PNG")).toHaveCount(0);
  await page.screenshot({ path: "docs/screens/rerun-comparison.png", fullPage: true });
});

test("duplicate and edit a finished sweep under a new name, then find it by name and creator", async ({ page }) => {
  test.setTimeout(240_000);
  await page.setViewportSize({ width: 1440, height: 900 });
  await signInWithPassword(page, DEMO_ENGINEER.email, DEMO_ENGINEER.password);
  const studioPath = await openStudio(page);
  await openSweep(page, studioPath, STIFFNESS_SWEEP);
  await page.getByRole("link", { name: "Duplicate and edit" }).click();
  const name = page.locator("#spec-name");
  await expect(name).toHaveValue("");
  await expect(name).toHaveAttribute("placeholder", `Copy of ${STIFFNESS_SWEEP}`.slice(0, 120));
  await name.fill("Bumper boats, softer buoy");
  await page.getByRole("button", { name: "Review and run" }).click();
  const confirm = page.getByTestId("confirm-sweep");
  await expect(confirm.getByTestId("confirm-name")).toHaveText("Named “Bumper boats, softer buoy”.");
  await confirm.getByRole("button", { name: "Run sweep" }).click();
  await expect(page.getByTestId("sweep-name")).toHaveText("Bumper boats, softer buoy");

  await page.goto(`${studioPath}/sweeps`);
  await page.getByLabel("Created by").selectOption({ label: DEMO_ENGINEER.name });
  await page.getByLabel("Name contains").fill("softer buoy");
  const table = page.getByTestId("sweeps-table");
  await expect(table.locator("tbody tr")).toHaveCount(1);
  await expect(table.getByTestId("sweep-creator")).toHaveText(DEMO_ENGINEER.name);
  await page.screenshot({ path: "docs/screens/sweeps-filtered.png" });
  await page.getByLabel("Name contains").fill("no sweep is called this");
  await expect(page.getByText("No sweeps match these filters.")).toBeVisible();
});

