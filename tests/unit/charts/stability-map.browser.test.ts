/**
 * The stability map in a real browser (Debian chromium through playwright-core): pointing at and
 * clicking cells, keyboard navigation, the tooltip, hatching of cells not computed yet, the PNG
 * export, and the error shown for bad props. Skipped when /usr/bin/chromium is not installed.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { existsSync } from "node:fs";
import { mkdtemp, readFile, rm, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import path from "node:path";
import { build } from "esbuild";
import { chromium, type Browser, type Page } from "playwright-core";
import { titleBlockHeight } from "@/components/maps/export";

const CHROMIUM = "/usr/bin/chromium";
const repoRoot = path.resolve(__dirname, "..", "..", "..");

const ENTRY = `
import { createRoot } from "react-dom/client";
import { createRef } from "react";
import { StabilityMap } from "@/components/maps/StabilityMap";
import { CellTimeSeries } from "@/components/maps/CellTimeSeries";
import { TrajectoryReplay } from "@/components/maps/TrajectoryReplay";
import { readChrome } from "@/components/maps/render";

const x = { label: "Stiffness", unit: "N/m", values: [1e3, 1e4, 1e5, 1e6], spacing: "log" };
const y = { label: "Timestep", unit: "s", values: [0.001, 0.002, 0.003], spacing: "linear" };
// Row 0 (1 ms): stable everywhere but the stiffest column; row 2 (3 ms) not computed yet.
const verdicts = ["stable", "stable", "stable", "exploded", "stable", "energy-drift", "deep-overlap", "exploded", null, null, null, null];
const reasons = verdicts.map((v, i) => (v === "exploded" ? "energy grew ×1e6 at t = 0.12 s" : null));
window.clicks = [];
window.mapRef = createRef();
const root = createRoot(document.getElementById("root"));
window.mountGood = () => root.render(<StabilityMap ref={window.mapRef} title="Pair, symplectic Euler" x={x} y={y} layer={{ kind: "verdict", verdicts }} reasons={reasons} height={360} onCellClick={(i) => window.clicks.push(i)} />);
window.mountBad = () => root.render(<StabilityMap x={x} y={y} layer={{ kind: "verdict", verdicts: verdicts.slice(0, 5) }} />);
// A disc of radius 0.1 m sliding from x = 1 m to x = 0.1 m onto the wall x = 0 over 1 s (invented data).
const n = 101;
const tS = Array.from({ length: n }, (_, i) => i / 100);
const xM = tS.map((t) => 1 - 0.9 * t);
const series = {
  tS,
  bodies: [{ xM, yM: tS.map(() => 0), pxNs: tS.map(() => -0.9), pyNs: tS.map(() => 0) }],
  totalPxNs: tS.map(() => -0.9),
  totalPyNs: tS.map(() => 0),
  kineticJ: tS.map(() => 0.405),
  potentialJ: tS.map(() => 0),
  totalJ: tS.map(() => 0.405),
  maxOverlapM: tS.map((t) => (t > 0.99 ? 0.001 : 0)),
};
window.mountDrillDown = () =>
  root.render(
    <div>
      <CellTimeSeries series={series} bodyLabels={["Hockey puck"]} overlapLimitM={0.01} />
      <TrajectoryReplay series={series} radiiM={[0.1]} walls={[{ normalX: 1, normalY: 0, offsetM: 0 }]} />
    </div>,
  );
window.readChrome = readChrome;
window.ready = true;
`;

const haveChromium = existsSync(CHROMIUM);

describe.skipIf(!haveChromium)("stability map in chromium", () => {
  let dir = "";
  let browser: Browser;
  let page: Page;
  const pageErrors: string[] = [];

  /** The plot rectangle the map reports, and the centre of one cell in page coordinates. */
  async function cellCentre(column: number, row: number, columns = 4, rows = 3): Promise<{ x: number; y: number }> {
    const canvas = page.locator("canvas[data-plot]");
    const plot = (await canvas.getAttribute("data-plot"))!.split(",").map(Number);
    const box = (await canvas.boundingBox())!;
    // Evenly spaced cells: the log x axis has equal decades, the linear y axis equal steps; row 0 at the bottom.
    return {
      x: box.x + plot[0] + ((column + 0.5) * plot[2]) / columns,
      y: box.y + plot[1] + plot[3] - ((row + 0.5) * plot[3]) / rows,
    };
  }

  beforeAll(async () => {
    dir = await mkdtemp(path.join(tmpdir(), "kd-map-test-"));
    await build({
      stdin: { contents: ENTRY, loader: "tsx", resolveDir: repoRoot, sourcefile: "map-test-entry.tsx" },
      bundle: true,
      format: "iife",
      jsx: "automatic",
      alias: { "@": repoRoot },
      define: { "process.env.NODE_ENV": '"production"' },
      outfile: path.join(dir, "app.js"),
      logLevel: "error",
    });
    await writeFile(path.join(dir, "index.html"), `<!doctype html><html><head><meta charset="utf-8"></head><body style="margin:0"><div id="root" style="width:800px"></div><script src="app.js"></script></body></html>`);
    browser = await chromium.launch({
      executablePath: CHROMIUM,
      args: ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"],
    });
    page = await browser.newPage({ viewport: { width: 900, height: 600 }, deviceScaleFactor: 2 });
    page.on("pageerror", (error) => pageErrors.push(String(error)));
    await page.goto(`file://${path.join(dir, "index.html")}`);
    await page.waitForFunction(() => (window as unknown as { ready?: boolean }).ready === true);
    await page.evaluate(() => (window as unknown as { mountGood: () => void }).mountGood());
    await page.waitForSelector("canvas[data-plot]");
  });

  afterAll(async () => {
    await browser?.close();
    if (dir) await rm(dir, { recursive: true, force: true });
  });

  it("reports the clicked cell's index", async () => {
    const centre = await cellCentre(2, 1);
    await page.mouse.click(centre.x, centre.y);
    // Hand derivation: row 1, column 2 of a 4-column map is index 1·4 + 2 = 6.
    expect(await page.evaluate(() => (window as unknown as { clicks: number[] }).clicks.at(-1))).toBe(6);
  });

  it("shows the cell's exact values, verdict and reason on hover", async () => {
    const centre = await cellCentre(3, 0);
    await page.mouse.move(centre.x, centre.y);
    const tooltip = page.getByRole("tooltip");
    await expect.poll(() => tooltip.textContent()).toContain("Stiffness: 1 MN/m");
    const text = (await tooltip.textContent()) ?? "";
    expect(text).toContain("Timestep: 1 ms");
    expect(text).toContain("Verdict: Exploded");
    expect(text).toContain("energy grew ×1e6 at t = 0.12 s");
    await page.mouse.move(1, 1);
  });

  it("moves between cells with the arrow keys and opens one with Enter", async () => {
    await page.locator("canvas[data-plot]").focus();
    // Home and PageDown go to column 0 and row 0, wherever an earlier click left the focus.
    await page.keyboard.press("Home");
    await page.keyboard.press("PageDown");
    await page.keyboard.press("ArrowRight");
    await page.keyboard.press("ArrowRight");
    await page.keyboard.press("ArrowUp");
    // From cell 0: two steps right and one up is row 1, column 2 → index 6 (hand derivation).
    await expect.poll(() => page.locator("[aria-live=polite]").textContent()).toContain("Stiffness: 100 kN/m. Timestep: 2 ms. Verdict: Deep overlap");
    await page.keyboard.press("Enter");
    expect(await page.evaluate(() => (window as unknown as { clicks: number[] }).clicks.at(-1))).toBe(6);
    await page.keyboard.press("PageUp");
    await expect.poll(() => page.locator("[aria-live=polite]").textContent()).toContain("not computed yet");
  });

  it("hatches cells not computed yet instead of colouring them", async () => {
    const pixelAt = async (column: number, row: number) => {
      const centre = await cellCentre(column, row);
      // A quarter of a cell off the centre, clear of the glyph drawn there.
      const plot = (await page.locator("canvas[data-plot]").getAttribute("data-plot"))!.split(",").map(Number);
      centre.x -= plot[2] / 4 / 4;
      centre.y -= plot[3] / 3 / 4;
      const box = (await page.locator("canvas[data-plot]").boundingBox())!;
      return page.evaluate(
        ([px, py]) => {
          const canvas = document.querySelector("canvas[data-plot]") as HTMLCanvasElement;
          const scale = canvas.width / canvas.getBoundingClientRect().width;
          // Sample a 6×6 device-pixel patch: hatching mixes surface and line colours, a filled cell is uniform.
          const data = canvas.getContext("2d")!.getImageData(Math.round(px * scale) - 3, Math.round(py * scale) - 3, 6, 6).data;
          const colours = new Set<string>();
          for (let i = 0; i < data.length; i += 4) colours.add(`${data[i]},${data[i + 1]},${data[i + 2]}`);
          return [...colours];
        },
        [centre.x - box.x, centre.y - box.y] as const,
      );
    };
    const stable = await pixelAt(0, 1);
    // The stable colour #b9f1dd = 185, 241, 221 (lib/charts/categories.ts), away from its glyph dot.
    expect(stable).toContain("185,241,221");
    const pending = await pixelAt(1, 2);
    expect(pending).not.toContain("185,241,221");
    expect(pending.length).toBeGreaterThan(1);
  });

  it("exports a PNG with the axes and legend at twice the size", async () => {
    const mapWidth = (await page.locator("canvas[data-plot]").boundingBox())!.width;
    const size = await page.evaluate(async () => {
      const handle = (window as unknown as { mapRef: { current: { toPngDataUrl(o?: { scale?: number }): string } } }).mapRef.current;
      const url = handle.toPngDataUrl({ scale: 2 });
      const image = new Image();
      image.src = url;
      await image.decode();
      return { prefix: url.slice(0, 22), width: image.naturalWidth, height: image.naturalHeight };
    });
    expect(size.prefix).toBe("data:image/png;base64,");
    // The export has the map's CSS size (at least 640 px wide) at scale 2.
    expect(size.width).toBe(2 * Math.max(640, Math.round(mapWidth)));
    // Above the map, its title block: the title and the export date line (titleBlockHeight).
    expect(size.height).toBe(2 * (360 + titleBlockHeight("Pair, symplectic Euler", 1)));
  });

  it("names the field when the data do not fit the axes", async () => {
    await page.evaluate(() => (window as unknown as { mountBad: () => void }).mountBad());
    await expect.poll(() => page.getByRole("alert").textContent()).toContain("layer.verdicts: 5 cells for a 4 × 3 map (needs 12)");
  });

  it("draws the drill-down charts and plays the replay to its end", async () => {
    await page.evaluate(() => (window as unknown as { mountDrillDown: () => void }).mountDrillDown());
    // The overview strip that zooms the run, then four charts, each with its legend; the body's name in the momentum legends.
    await expect.poll(() => page.locator("figcaption").allTextContents()).toEqual(["Overview (overlap over the whole run): drag the handles to zoom, the middle to pan", "Momentum along x", "Momentum along y", "Energy", "Largest overlap"]);
    await expect.poll(() => page.locator(".recharts-legend-item-text", { hasText: "Hockey puck" }).count()).toBe(2);
    // Lines: the overview strip's one, then 2 + 2 + 3 + 1 in the four charts.
    expect(await page.locator(".recharts-line").count()).toBe(1 + 2 + 2 + 3 + 1);
    // Scrub to the middle: the slider spans 0 … 1000 over the run (1 s), so 500 is t = 500 ms.
    await page.locator("input[type=range]").fill("500");
    await expect.poll(() => page.locator("output").last().textContent()).toBe("t = 500 ms");
    // Fastest setting plays the whole second in 2 s; it stops at the end and offers a replay.
    await page.getByLabel("Speed").selectOption("2");
    await page.getByRole("button", { name: "Play" }).click();
    await expect.poll(() => page.getByRole("button", { name: "Replay" }).count(), { timeout: 10_000 }).toBe(1);
    expect(await page.locator("output").last().textContent()).toBe("t = 1 s");
    expect(pageErrors).toEqual([]);
  });

  it("draws its chrome in the palette of the colour scheme in use, from the light-dark() tokens", async () => {
    // The app's own palette, without its Tailwind import; the browser drops the Tailwind-only @theme and @custom-variant.
    const css = (await readFile(path.join(repoRoot, "app", "globals.css"), "utf8")).replace(/^@import [^;]*;/m, "");
    await page.addStyleTag({ content: css });
    const chrome = () => page.evaluate(() => (window as unknown as { readChrome(e: Element): { ink: string; surface: string; line: string } }).readChrome(document.getElementById("root")!));
    const setTheme = (theme: string | null) => page.evaluate((t) => (t ? document.documentElement.setAttribute("data-theme", t) : document.documentElement.removeAttribute("data-theme")), theme);
    // --kd-ink, --kd-surface and --kd-line of app/globals.css: light halves, then dark halves.
    const light = { ink: "#161b24", surface: "#ffffff", line: "#d8d3c7" };
    const dark = { ink: "#e9e6df", surface: "#161b26", line: "#2c3445" };
    await setTheme("dark");
    expect(await chrome()).toMatchObject(dark);
    await setTheme("light");
    expect(await chrome()).toMatchObject(light);
    // Without a stored choice the operating system's preference decides.
    await setTheme(null);
    await page.emulateMedia({ colorScheme: "dark" });
    expect(await chrome()).toMatchObject(dark);
    await page.emulateMedia({ colorScheme: "light" });
    expect(await chrome()).toMatchObject(light);
  });
});
