/**
 * Benchmark: drawing a 256 × 256 stability map in headless Debian chromium.
 *
 * Bundles components/maps/StabilityMap.tsx with esbuild into a small page in a temp folder,
 * opens it with playwright-core, and redraws the map with fresh data several times. Prints the
 * median and max time per draw against the 200 ms target; asserts nothing.
 *
 * Figures per case:
 * - "full": React render + model build (cells → packed colours) + canvas draw + a pixel
 *   read-back that forces the canvas to finish rasterising;
 * - "canvas": the canvas draw alone, as the component reports it through onDraw.
 *
 * Run alone: `npx tsx tests/bench/map-render.ts`; or through tests/bench/run-all.ts as `mapRender`
 * (a BenchModule; `run()` is exported too).
 */
import { mkdtemp, rm, writeFile } from "node:fs/promises";
import { existsSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { build } from "esbuild";
import { chromium } from "playwright-core";
import type { BenchModule } from "./bench-module";

const TARGET_MS = 200;
const SIZE = 256;
const DRAWS = 9;
const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..", "..");

const ENTRY = `
import { createRoot } from "react-dom/client";
import { flushSync } from "react-dom";
import { StabilityMap } from "@/components/maps/StabilityMap";
import { stabilityBoundOverlays, stepsPerContactOverlays } from "@/lib/charts/overlays";

const SIZE = ${SIZE};
const logValues = (lo, hi, n) => Array.from({ length: n }, (_, i) => 10 ** (Math.log10(lo) + (i * (Math.log10(hi) - Math.log10(lo))) / (n - 1)));
const stiffness = logValues(1e2, 1e8, SIZE);
const timestep = logValues(1e-5, 1e-1, SIZE);
const x = { label: "Contact stiffness", unit: "N/m", values: stiffness, spacing: "log" };
const y = { label: "Timestep", unit: "s", values: timestep, spacing: "log" };
const uneven = { label: "Restitution", unit: "", values: Array.from({ length: SIZE }, (_, i) => (i / SIZE) ** 2 + i * 1e-3), spacing: "linear" };
const overlays = [
  ...stabilityBoundOverlays({ effectiveMassKg: 0.5, xRange: [1e2, 1e8], xSpacing: "log", marginFraction: 0.2 }),
  ...stepsPerContactOverlays({ effectiveMassKg: 0.5, xRange: [1e2, 1e8], xSpacing: "log" }),
];
const VERDICTS = ["stable", "energy-drift", "deep-overlap", "tunneled", "exploded"];

function metricLayer(seed) {
  const values = new Float64Array(SIZE * SIZE);
  for (let r = 0; r < SIZE; r++) for (let c = 0; c < SIZE; c++) {
    const omegaDt = Math.sqrt(stiffness[c] / 0.5) * timestep[r];
    values[r * SIZE + c] = ((r * 7 + c * 13 + seed) % 97 === 0) ? NaN : omegaDt * (1 + 0.01 * seed);
  }
  return { kind: "metric", label: "ω·dt", unit: "", values, scale: { normalisation: "log" } };
}
function verdictLayer(seed) {
  const verdicts = new Array(SIZE * SIZE);
  for (let r = 0; r < SIZE; r++) for (let c = 0; c < SIZE; c++) {
    const omegaDt = Math.sqrt(stiffness[c] / 0.5) * timestep[r] * (1 + 0.01 * seed);
    verdicts[r * SIZE + c] = omegaDt > 2 ? "exploded" : omegaDt > 1.2 ? "energy-drift" : omegaDt > 0.6 ? VERDICTS[(r + c + seed) % 4] : "stable";
  }
  return { kind: "verdict", verdicts };
}

const root = createRoot(document.getElementById("root"));
let lastCanvasMs = NaN;
const onDraw = (ms) => { lastCanvasMs = ms; };

// 48 × 48 cells are big enough (≈ 16 px) for a glyph in every cell: the glyph-drawing cost.
const glyphX = { ...x, values: logValues(1e2, 1e8, 48) };
const glyphY = { ...y, values: logValues(1e-5, 1e-1, 48) };
function glyphLayer(seed) {
  return { kind: "verdict", verdicts: Array.from({ length: 48 * 48 }, (_, i) => VERDICTS[(i + seed) % 5]) };
}

function drawOnce(kind, seed) {
  const layer = kind === "verdict" ? verdictLayer(seed) : kind === "glyphs-48" ? glyphLayer(seed) : metricLayer(seed);
  const xAxis = kind === "glyphs-48" ? glyphX : x;
  const yAxis = kind === "uneven-axis" ? uneven : kind === "glyphs-48" ? glyphY : y;
  lastCanvasMs = NaN;
  const started = performance.now();
  flushSync(() => root.render(<StabilityMap x={xAxis} y={yAxis} layer={layer} overlays={kind === "uneven-axis" ? [] : overlays} height={640} onDraw={onDraw} />));
  // Reading one pixel back forces the canvas to finish drawing before the clock stops.
  const canvas = document.querySelector("canvas");
  canvas.getContext("2d").getImageData(0, 0, 1, 1);
  return { fullMs: performance.now() - started, canvasMs: lastCanvasMs, devicePixels: canvas.width * canvas.height };
}

window.__kdBench = async (kind, draws) => {
  const results = [];
  // Warm-up: JIT, fonts, the first layout (the map learns its width from a ResizeObserver).
  for (let i = 0; i < 3; i++) {
    drawOnce(kind, 100 + i);
    await new Promise((resolve) => requestAnimationFrame(() => resolve()));
  }
  for (let i = 1; i <= draws; i++) {
    results.push(drawOnce(kind, i));
    await new Promise((resolve) => requestAnimationFrame(() => resolve()));
  }
  return results;
};
window.__kdReady = true;
`;

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}

export async function run(): Promise<void> {
  const executablePath = "/usr/bin/chromium";
  if (!existsSync(executablePath)) {
    console.log(`map-render: ${executablePath} is missing (apt-get install -y chromium); benchmark skipped`);
    return;
  }
  const dir = await mkdtemp(path.join(tmpdir(), "kd-map-bench-"));
  try {
    await build({
      stdin: { contents: ENTRY, loader: "tsx", resolveDir: repoRoot, sourcefile: "map-bench-entry.tsx" },
      bundle: true,
      format: "iife",
      platform: "browser",
      target: "es2022",
      jsx: "automatic",
      minify: true,
      define: { "process.env.NODE_ENV": '"production"' },
      alias: { "@": repoRoot },
      outfile: path.join(dir, "bench.js"),
      logLevel: "error",
    });
    await writeFile(
      path.join(dir, "index.html"),
      `<!doctype html><html><head><meta charset="utf-8"><style>body{margin:0;font-family:sans-serif} #root{width:900px}</style></head><body><div id="root"></div><script src="bench.js"></script></body></html>`,
    );
    const browser = await chromium.launch({
      executablePath,
      args: ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"],
    });
    try {
      const page = await browser.newPage({ viewport: { width: 1000, height: 800 }, deviceScaleFactor: 2 });
      const errors: string[] = [];
      page.on("pageerror", (error) => errors.push(String(error)));
      await page.goto(`file://${path.join(dir, "index.html")}`);
      await page.waitForFunction(() => (window as unknown as { __kdReady?: boolean }).__kdReady === true);
      console.log(`map-render: ${SIZE} × ${SIZE} cells, 900 × 640 CSS px at device pixel ratio 2, ${DRAWS} draws per case after three warm-up draws, target ${TARGET_MS} ms`);
      for (const kind of ["metric", "verdict", "uneven-axis", "glyphs-48"] as const) {
        const results = await page.evaluate(
          ([k, n]) => (window as unknown as { __kdBench: (kind: string, draws: number) => Promise<{ fullMs: number; canvasMs: number; devicePixels: number }[]> }).__kdBench(k, n),
          [kind, DRAWS] as const,
        );
        const drawn = results.filter((r) => Number.isFinite(r.canvasMs));
        if (drawn.length < results.length) console.log(`  (${results.length - drawn.length} of ${results.length} renders did not redraw the canvas)`);
        const full = drawn.map((r) => r.fullMs);
        const canvas = drawn.map((r) => r.canvasMs);
        const label = {
          metric: "256² metric (log ω·dt, overlays)",
          verdict: "256² verdict (overlays)",
          "uneven-axis": "256² metric, uneven y cells",
          "glyphs-48": "48² verdict with a glyph per cell",
        }[kind];
        console.log(
          `  ${label.padEnd(34)} full: median ${median(full).toFixed(1)} ms, max ${Math.max(...full).toFixed(1)} ms | canvas: median ${median(canvas).toFixed(1)} ms, max ${Math.max(...canvas).toFixed(1)} ms | ${Math.max(...full) < TARGET_MS ? "within" : "OVER"} target`,
        );
      }
      if (errors.length > 0) console.log(`map-render: page errors:\n  ${errors.join("\n  ")}`);
    } finally {
      await browser.close();
    }
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}

/** For tests/bench/run-all.ts (BENCH_MODULES). */
export const mapRender: BenchModule = {
  id: "map-render",
  title: "drawing a 256 × 256 stability map in headless chromium",
  run,
};

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  run().catch((error) => {
    console.error(error);
    process.exitCode = 1;
  });
}
