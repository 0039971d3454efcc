import { readFile } from "node:fs/promises";
import { type Locator, type Page } from "@playwright/test";
import { DEMO_ENGINEER, expect, plotPoint, signInWithPassword, test } from "./helpers";

// The "Stiffness a frame rate can carry" template (lib/sweeps/templates.ts): boat 40 kg against buoy 120 kg,
// 4 substeps, stiffness 1e3 … 1e9 N/m in 25 log steps, frame steps 1/120, 1/60, 1/30 s.
const REDUCED_MASS_KG = (40 * 120) / (40 + 120);
const SUBSTEPS = 4;
const STIFFNESSES = Array.from({ length: 25 }, (_, i) => 10 ** (3 + 0.25 * i));
const FRAME_STEPS = [1 / 120, 1 / 60, 1 / 30];

/** ω·h of a cell: ω = √(k/m*) of the linear contact, h = dt/substeps. */
function omegaH(stiffness: number, dtS: number): number {
  return Math.sqrt(stiffness / REDUCED_MASS_KG) * (dtS / SUBSTEPS);
}

async function hoverCell(page: Page, map: Locator, stiffnessIndex: number, frameStepIndex: number): Promise<string> {
  const box = (await map.boundingBox())!;
  // Cells are equal bins on the log stiffness axis; frame steps rise upwards (the top row is 30 Hz).
  const point = await plotPoint(map, (stiffnessIndex + 0.5) / STIFFNESSES.length, 1 - (frameStepIndex + 0.5) / FRAME_STEPS.length);
  await page.mouse.move(box.x + point.x, box.y + point.y);
  const tooltip = page.getByRole("tooltip");
  await expect(tooltip).toContainText("ω·h up to");
  return (await tooltip.textContent()) ?? "";
}

test("the frame-rate template: the unstable region starts at the drawn ω·dt = 2 line, the hover says ω·h and the rebound, the envelope stops short", async ({ page }) => {
  test.setTimeout(240_000);
  await signInWithPassword(page, DEMO_ENGINEER.email, DEMO_ENGINEER.password);
  await page.getByRole("link", { name: DEMO_ENGINEER.studio }).first().click();
  await expect(page.getByTestId("studio-name")).toHaveText(DEMO_ENGINEER.studio);
  await page.getByRole("navigation", { name: "Studio" }).getByRole("link", { name: "Sweeps" }).click();
  await page.getByRole("link", { name: "New sweep" }).click();
  await page.getByLabel(/Stiffness a frame rate can carry/).check();
  await expect(page.getByTestId("quote-panel").getByTestId("quote-cells")).toHaveText("150");
  await page.getByRole("button", { name: "Review and run" }).click();
  await page.getByTestId("confirm-sweep").getByRole("button", { name: "Run sweep" }).click();
  await expect(page.getByTestId("sweep-progress")).toHaveAttribute("aria-valuenow", "100", { timeout: 150_000 });

  const map = page.getByRole("application").first();
  await expect(map).toHaveAttribute("data-plot", /.+/);
  await map.scrollIntoViewIfNeeded();
  // In every frame-step row (symplectic Euler, the first integrator) the unstable region starts within
  // one cell of the line ω·h = 2 (Hairer, Lubich & Wanner 2006, the bound the map draws): two cells
  // left of it nothing is unstable; the last cell left of it is unstable only through a rebound past
  // the amplification limit (2×); the first cell right of it is step-unstable or exploded and says ω·h ≥ 2.
  for (let row = 0; row < FRAME_STEPS.length; row++) {
    const lastBelow = STIFFNESSES.findLastIndex((k) => omegaH(k, FRAME_STEPS[row]) < 2);
    expect(lastBelow).toBeGreaterThan(1);
    const twoBelow = await hoverCell(page, map, lastBelow - 1, row);
    expect(twoBelow).not.toMatch(/Step unstable|Exploded/);
    expect(Number(/ω·h up to ([\d.]+)/.exec(twoBelow)![1])).toBeLessThan(2);
    expect(twoBelow).toMatch(/rebound [\d.]+× the model's/);
    const below = await hoverCell(page, map, lastBelow, row);
    expect(Number(/ω·h up to ([\d.]+)/.exec(below)![1])).toBeLessThan(2);
    if (/Step unstable/.test(below)) expect(Number(/rebound ([\d.]+)×/.exec(below)![1])).toBeGreaterThan(2);
    const beyond = await hoverCell(page, map, lastBelow + 1, row);
    expect(beyond).toMatch(/Step unstable|Exploded/);
    expect(Number(/ω·h up to ([\d.]+)/.exec(beyond)![1])).toBeGreaterThanOrEqual(2);
  }

  // The safe envelope of the frame step over stiffness stops short of the line: at every stiffness
  // with a safe frame step, ω·h at that step is below 2.
  await page.getByLabel(/^Margin/).fill("0");
  await expect(page.getByTestId("envelope-table")).toBeVisible();
  const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "Envelope (JSON)" }).click()]);
  const body = JSON.parse(await readFile(await download.path(), "utf8")) as { envelope: { rows: { x: number; safeY: number | null; status: string }[] } };
  const safe = body.envelope.rows.filter((row) => row.status === "ok");
  expect(safe.length).toBeGreaterThan(0);
  for (const row of safe) expect(omegaH(row.x, row.safeY!)).toBeLessThan(2);
  await page.screenshot({ path: test.info().outputPath("stability-boundary.png"), fullPage: true });
});
