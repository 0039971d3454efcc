import { readFile } from "node:fs/promises";
import { type Locator, type Page } from "@playwright/test";
import { DEMO_ENGINEER, expect, plotPoint, signInWithPassword, test } from "./helpers";

// The "Friction that holds a crate on a ramp" template (lib/sweeps/templates.ts): a 20 kg crate on a
// ramp at 60 Hz with 4 substeps; friction μ 0.1 … 1.0 (10 values) × ramp angle 5° … 45° (9 values) ×
// tangential stiffness ratio 2/7, 1, 3.
const COEFFICIENTS = Array.from({ length: 10 }, (_, i) => 0.1 + 0.1 * i);
const ANGLES_DEG = Array.from({ length: 9 }, (_, i) => 5 + 5 * i);

/** A crate slides once tan θ > μ (Kleppner & Kolenkow, An Introduction to Mechanics, 2nd ed. 2014, ch. 2). */
function slides(coefficient: number, angleDeg: number): boolean {
  return Math.tan((angleDeg * Math.PI) / 180) > coefficient;
}

/** Moves the mouse onto a cell (μ along x, angle rising upwards) and returns its tooltip's text. */
async function hoverCell(page: Page, map: Locator, coefficientIndex: number, angleIndex: number): Promise<{ text: string; x: number; y: number }> {
  const box = (await map.boundingBox())!;
  const point = await plotPoint(map, (coefficientIndex + 0.5) / COEFFICIENTS.length, 1 - (angleIndex + 0.5) / ANGLES_DEG.length);
  await page.mouse.move(box.x + point.x, box.y + point.y);
  const tooltip = page.getByRole("tooltip");
  await expect(tooltip).toContainText(`slope angle: ${ANGLES_DEG[angleIndex]}`);
  return { text: (await tooltip.textContent()) ?? "", x: box.x + point.x, y: box.y + point.y };
}

test("an engineer runs the ramp template, sees where crates creep and hold, watches a creeping crate slide, exports μ and k_t with the envelope", async ({ page }) => {
  test.setTimeout(240_000);
  const pageErrors: string[] = [];
  page.on("pageerror", (error) => pageErrors.push(error.message));
  await signInWithPassword(page, DEMO_ENGINEER.email, DEMO_ENGINEER.password);
  await page.getByRole("link", { name: DEMO_ENGINEER.studio }).first().click();
  await expect(page.getByTestId("studio-name")).toHaveText(DEMO_ENGINEER.studio);
  await page.getByRole("navigation", { name: "Studio" }).getByRole("link", { name: "Sweeps" }).click();
  await page.getByRole("link", { name: "New sweep" }).click();

  // --- The ramp template: 10 × 9 × 3 = 270 cells.
  await page.getByLabel(/Friction that holds a crate on a ramp/).check();
  await expect(page.getByTestId("quote-panel").getByTestId("quote-cells")).toHaveText("270");
  await page.getByRole("button", { name: "Review and run" }).click();
  await page.getByTestId("confirm-sweep").getByRole("button", { name: "Run sweep" }).click();
  await expect(page.getByTestId("sweep-progress")).toHaveAttribute("aria-valuenow", "100", { timeout: 150_000 });
  const sweepPath = new URL(page.url()).pathname;

  // --- Where crates creep and where they hold: both verdicts are counted.
  await expect(page.getByTestId("verdict-count-creep")).toBeVisible();
  await expect(page.getByTestId("verdict-count-stable")).toBeVisible();

  // --- The map of μ × angle at k_t/k = 3 (the third axis's last value).
  await page.locator("#map-slice-2").selectOption({ index: 2 });
  const map = page.getByRole("application").first();
  await expect(map).toHaveAttribute("data-plot", /.+/);
  await map.scrollIntoViewIfNeeded();
  // μ 0.9 at 20°: tan 20° = 0.36 < 0.9, friction should hold the crate, yet it walks down: creep.
  expect(slides(COEFFICIENTS[8], ANGLES_DEG[3])).toBe(false);
  const creeping = await hoverCell(page, map, 8, 3);
  expect(creeping.text).toContain("Creep");
  expect(creeping.text).toContain("friction should hold the body at 20°");
  // μ 0.2 at 45°: past the sliding angle, the crate slides as it should (no creep, no jitter).
  expect(slides(COEFFICIENTS[1], ANGLES_DEG[8])).toBe(true);
  const sliding = await hoverCell(page, map, 1, 8);
  expect(sliding.text).not.toContain("Creep");
  expect(sliding.text).not.toContain("Jitter");

  // --- The creep itself as a map layer (stored with the cells): the creeping crate walked farther
  // than 1 % of its 0.3 m size in the second half (DEFAULT_TOLERANCES.creepFraction, our choice).
  await page.locator("#map-show").selectOption("creepM");
  await expect(map).toHaveAttribute("data-plot", /.+/);
  const creepLayer = await hoverCell(page, map, 8, 3);
  expect(creepLayer.text).toContain("Verdict: Creep");
  // Six significant digits with an SI prefix (lib/charts/format.ts formatPrecise).
  const creepText = /creep \(second half\): ([\d.]+) (µm|mm|m)(?![a-z])/.exec(creepLayer.text);
  expect(creepText, creepLayer.text).not.toBeNull();
  const creepM = Number(creepText![1]) * { µm: 1e-6, mm: 1e-3, m: 1 }[creepText![2] as "µm" | "mm" | "m"];
  expect(creepM).toBeGreaterThan(0.01 * 0.3);
  // The map (its legend is drawn with it) names the layer.
  await expect(map).toHaveAccessibleName(/^creep \(second half\) map, 10 by 9 cells/);
  await page.locator("#map-show").selectOption("verdict");

  // --- The common tangential spring (k_t/k = 2/7) holds the same crate at μ 0.9, 20°.
  await page.locator("#map-slice-2").selectOption({ index: 0 });
  await expect(map).toHaveAttribute("data-plot", /.+/);
  const holding = await hoverCell(page, map, 8, 3);
  expect(holding.text).toContain("Stable");
  await page.screenshot({ path: test.info().outputPath("ramp-map.png"), fullPage: true });

  // --- Open the creeping cell: the replay shows the crate's contact sliding, with the legend.
  await page.locator("#map-slice-2").selectOption({ index: 2 });
  await expect(map).toHaveAttribute("data-plot", /.+/);
  const again = await hoverCell(page, map, 8, 3);
  await page.mouse.click(again.x, again.y);
  await expect(page).toHaveURL(new RegExp(`${sweepPath}/cells/\\d+$`));
  await expect(page.getByTestId("cell-verdict")).toHaveText("Creep");
  const legend = page.getByTestId("replay-friction-legend");
  await expect(legend).toContainText("rim mark");
  await expect(legend).toContainText("contact sticking");
  await expect(legend).toContainText("contact sliding");
  await expect(page.getByText("Slip speed at a sliding contact")).toBeVisible();
  await expect(page.getByText("Spin (angular velocity")).toBeVisible();
  // The stored rotation metrics in the cell's metrics list, with their units.
  await expect(page.getByTestId("cell-metrics")).toContainText("Creep (second half) [m]");
  await expect(page.getByTestId("cell-metrics")).toContainText("Steps with a sliding contact [steps]");
  // Scrub through the run until the crate's contact is sliding (it slips again and again as it walks).
  const scrubber = page.getByRole("slider", { name: "Time" });
  const state = page.getByTestId("replay-friction-state");
  let sawSliding = false;
  for (let position = 500; position <= 1000 && !sawSliding; position += 25) {
    await scrubber.fill(String(position));
    sawSliding = /now: 1 sliding, 0 sticking/.test((await state.textContent()) ?? "");
  }
  expect(sawSliding, "the creeping crate's contact slides at some moment of the second half").toBe(true);
  await expect(page.getByRole("img", { name: /friction contacts: 1 sliding, 0 sticking/ })).toBeVisible();
  await page.screenshot({ path: test.info().outputPath("ramp-cell.png"), fullPage: true });

  // --- Back on the map: the envelope (JSON) carries μ and k_t beside the normal contact.
  await page.getByRole("link", { name: /Back to the stability map/ }).click();
  await expect(page).toHaveURL(sweepPath);
  await expect(page.getByTestId("envelope-table")).toBeVisible();
  const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "Envelope (JSON)" }).click()]);
  const body = JSON.parse(await readFile((await download.path())!, "utf8")) as {
    envelope: { xPath: string; yPath: string };
    document: { version: number; friction: { kind: string; coefficient: number[]; stiffnessRatio: number[] | null; dampingRatio: number[] } };
  };
  expect(body.envelope.xPath).toBe("contact.friction.coefficient");
  expect(body.envelope.yPath).toBe("scene.angleDeg");
  expect(body.document.version).toBe(4);
  expect(body.document.friction.kind).toBe("coulomb");
  expect(body.document.friction.coefficient).toHaveLength(10);
  expect(body.document.friction.coefficient[0]).toBeCloseTo(0.1, 12);
  expect(body.document.friction.stiffnessRatio).toEqual([2 / 7, 1, 3]);
  expect(body.document.friction.dampingRatio).toEqual([0.5]);
  expect(pageErrors).toEqual([]);
});
