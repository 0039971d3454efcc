/**
 * First visit to every page of the demo: the time from starting the navigation (a fresh browser
 * context, so nothing is cached) to the page's main content being visible, in Debian's chromium.
 * Target (issue 22): under 1.5 s per page. The peer measured in the same run is the sign-in page,
 * the lightest page the server renders; each page's ratio to it separates the page's own cost from
 * the machine's load.
 *
 * The app: KD_BENCH_URL (e.g. http://localhost:3000 of a running `npm run demo`) is reused as it
 * is; otherwise the production build (`npm run build` first, NEXT_DIST_DIR as built) is started on
 * a fresh demo data folder on KD_BENCH_PORT (default 3390), and stopped afterwards. It says which.
 * KD_BENCH_PAGES (comma-separated page names, e.g. "sweep page,sweep map drawn") measures only those
 * pages, with the peer always measured first, for working on one page without the whole run.
 */
import { spawn, type ChildProcess } from "node:child_process";
import { mkdtempSync, rmSync } from "node:fs";
import { cpus, loadavg, tmpdir } from "node:os";
import path from "node:path";
import { chromium, type Browser, type Page } from "@playwright/test";
import { table, type BenchModule } from "./bench-module";

const ENGINEER = { email: "tobiah@gannetyard.test", password: "crateslide-engineer" };
// Billing and invoices are the owner's and finance's pages (an engineer gets the 403 page there).
const OWNER = { email: "maren@gannetyard.test", password: "crateslide-owner" };
const ADMIN = { email: "ops@kickdrift.test", password: "kickdrift-operator" };
const TARGET_MS = 1500;

interface PageCase {
  name: string;
  /** The path, given the demo studio's id and its first finished map sweep. */
  path: (ids: Ids) => string | null;
  /** What shows that the main content is there (not a loading placeholder). */
  ready: (page: Page) => ReturnType<Page["locator"]>;
  as: "guest" | "engineer" | "owner" | "admin";
}

interface Ids {
  studioId: string;
  sweepId: string | null;
  catalogueId: string | null;
}

const heading = (text: string | RegExp) => (page: Page) => page.getByRole("heading", { name: text }).first();

const CASES: PageCase[] = [
  { name: "sign in (peer)", path: () => "/signin", ready: (page) => page.locator("form button[type=submit]").first(), as: "guest" },
  { name: "landing", path: () => "/", ready: (page) => page.locator("main h1").first(), as: "guest" },
  { name: "studios", path: () => "/studios", ready: (page) => page.getByRole("link", { name: "Gannet Yard Games" }).first(), as: "engineer" },
  { name: "studio home", path: (ids) => `/studios/${ids.studioId}`, ready: (page) => page.getByTestId("home-balance"), as: "engineer" },
  { name: "sweeps list", path: (ids) => `/studios/${ids.studioId}/sweeps`, ready: (page) => page.getByTestId("sweeps-table"), as: "engineer" },
  { name: "sweep page", path: (ids) => (ids.sweepId ? `/studios/${ids.studioId}/sweeps/${ids.sweepId}` : null), ready: (page) => page.getByTestId("sweep-name"), as: "engineer" },
  // Drawn with every cell of the finished sweep (the map's first draw, before the cells arrive, shows them all as not computed).
  { name: "sweep map drawn", path: (ids) => (ids.sweepId ? `/studios/${ids.studioId}/sweeps/${ids.sweepId}` : null), ready: (page) => page.locator('canvas[data-plot][data-pending-cells="0"]').first(), as: "engineer" },
  { name: "cell page", path: (ids) => (ids.sweepId ? `/studios/${ids.studioId}/sweeps/${ids.sweepId}/cells/0` : null), ready: (page) => page.getByTestId("cell-verdict"), as: "engineer" },
  { name: "new sweep", path: (ids) => `/studios/${ids.studioId}/sweeps/new`, ready: (page) => page.getByTestId("quote-panel"), as: "engineer" },
  { name: "billing", path: (ids) => `/studios/${ids.studioId}/billing`, ready: heading(/balance|billing/i), as: "owner" },
  { name: "invoices", path: (ids) => `/studios/${ids.studioId}/invoices`, ready: (page) => page.getByTestId("invoices-table"), as: "owner" },
  { name: "catalogues", path: (ids) => `/studios/${ids.studioId}/catalogues`, ready: (page) => page.getByTestId("catalogues-table"), as: "engineer" },
  { name: "catalogue", path: (ids) => (ids.catalogueId ? `/studios/${ids.studioId}/catalogues/${ids.catalogueId}` : null), ready: (page) => page.locator("main h2").first(), as: "engineer" },
  { name: "snapshots", path: (ids) => `/studios/${ids.studioId}/snapshots`, ready: (page) => page.getByTestId("snapshots-table"), as: "engineer" },
  // Members, tokens and webhooks are the owner's pages (an engineer gets the 403 page, which has no h2).
  // Their main content is the list itself, not the card's title over a loading row.
  { name: "members", path: (ids) => `/studios/${ids.studioId}/members`, ready: (page) => page.getByTestId("members-table"), as: "owner" },
  { name: "tokens", path: (ids) => `/studios/${ids.studioId}/tokens`, ready: (page) => page.getByTestId("tokens-table").or(page.getByText("No tokens yet.")).first(), as: "owner" },
  {
    name: "webhooks",
    path: (ids) => `/studios/${ids.studioId}/webhooks`,
    ready: (page) => page.getByRole("button", { name: /^Remove / }).first().or(page.getByText("No endpoints yet.")).first(),
    as: "owner",
  },
  { name: "help", path: () => "/help", ready: (page) => page.locator("main h1, main h2").first(), as: "guest" },
  { name: "admin", path: () => "/admin", ready: (page) => page.locator("main h1, main h2").first(), as: "admin" },
];

interface VisitProfile {
  /** From the navigation's start to the last byte of the server's HTML (the server's part, with the transfer). */
  htmlMs: number;
  /** Compressed size of the scripts the page had loaded when its main content showed. */
  scriptKb: number;
  /** Requests to /api/ the page had made by then (each a round trip after hydration). */
  apiCalls: number;
}

async function visitProfile(page: Page): Promise<VisitProfile> {
  return page.evaluate(() => {
    const navigation = performance.getEntriesByType("navigation")[0] as PerformanceNavigationTiming | undefined;
    const resources = performance.getEntriesByType("resource") as PerformanceResourceTiming[];
    return {
      htmlMs: navigation ? navigation.responseEnd : Number.NaN,
      scriptKb: resources.filter((entry) => entry.initiatorType === "script").reduce((sum, entry) => sum + entry.encodedBodySize, 0) / 1024,
      apiCalls: resources.filter((entry) => new URL(entry.name).pathname.startsWith("/api/")).length,
    };
  });
}

async function waitForUp(url: string, deadlineMs: number): Promise<void> {
  const deadline = Date.now() + deadlineMs;
  for (;;) {
    try {
      const response = await fetch(`${url}/signin`);
      if (response.ok) return;
    } catch {
      // not listening yet
    }
    if (Date.now() > deadline) throw new Error(`the app at ${url} did not answer within ${deadlineMs / 1000} s`);
    await new Promise((resolve) => setTimeout(resolve, 500));
  }
}

async function startApp(): Promise<{ url: string; stop: () => void; how: string }> {
  if (process.env.KD_BENCH_URL) return { url: process.env.KD_BENCH_URL.replace(/\/$/, ""), stop: () => {}, how: `reusing the running app at ${process.env.KD_BENCH_URL}` };
  const port = Number(process.env.KD_BENCH_PORT ?? 3390);
  const dataDir = mkdtempSync(path.join(tmpdir(), "kickdrift-bench-"));
  const child: ChildProcess = spawn("npx", ["next", "start", "-p", String(port)], {
    stdio: "ignore",
    env: {
      ...process.env,
      NEXT_DIST_DIR: process.env.NEXT_DIST_DIR ?? ".next",
      KICKDRIFT_DATA_DIR: dataDir,
      KICKDRIFT_DEMO: "1",
      NEXTAUTH_URL: `http://localhost:${port}`,
      MAIL_FAKE_PORT: String(port + 1000),
      STRIPE_FAKE_PORT: String(port + 2000),
      STRIPE_SECRET_KEY: "",
      STRIPE_WEBHOOK_SECRET: "",
      SMTP_URL: "",
      DATABASE_URL: "",
    },
    detached: true,
  });
  const url = `http://localhost:${port}`;
  const stop = () => {
    if (child.pid) process.kill(-child.pid, "SIGTERM");
    rmSync(dataDir, { recursive: true, force: true });
  };
  try {
    await waitForUp(url, 180_000);
  } catch (error) {
    stop();
    throw error;
  }
  return { url, stop, how: `started the production build (${process.env.NEXT_DIST_DIR ?? ".next"}) on ${url} with a fresh demo data folder` };
}

async function signedInState(browser: Browser, url: string, who: { email: string; password: string }) {
  const context = await browser.newContext();
  const page = await context.newPage();
  await page.goto(`${url}/signin`);
  // The sign-in page also has an e-mailed-link form: name the password form's fields exactly (as the browser tests do).
  await page.getByLabel("E-mail", { exact: true }).fill(who.email);
  await page.getByLabel("Password", { exact: true }).fill(who.password);
  await page.getByRole("button", { name: "Sign in", exact: true }).click();
  await page.waitForURL(/\/(studios|admin)/, { timeout: 60_000 });
  const state = await context.storageState();
  await context.close();
  return state;
}

export const firstVisit: BenchModule = {
  id: "first-visit",
  title: "First visit to every page of the demo: navigation to main content, chromium, fresh context",
  async run() {
    const app = await startApp();
    console.log(app.how);
    // The figures depend on what else the machine runs: say how loaded it was (1, 5 and 15 min averages).
    const load = () => loadavg().map((value) => value.toFixed(2)).join(", ");
    console.log(`load average at start: ${load()} (${cpus().length} cores)`);
    const browser = await chromium.launch({ executablePath: "/usr/bin/chromium", args: ["--no-sandbox", "--disable-gpu"] });
    try {
      const engineer = await signedInState(browser, app.url, ENGINEER);
      const admin = await signedInState(browser, app.url, ADMIN);
      const owner = await signedInState(browser, app.url, OWNER);
      // The demo studio, its first finished sweep with at least two axes, and its first catalogue.
      const probe = await browser.newContext({ storageState: engineer });
      const studios = (await (await probe.request.get(`${app.url}/api/v1/studios`)).json()) as { studios: { id: string; name: string }[] };
      const studioId = studios.studios.find((s) => s.name === "Gannet Yard Games")?.id ?? studios.studios[0].id;
      // The demo's sweeps are computing right after start-up: wait (up to 3 min) for a finished map to open.
      let sweepId: string | null = null;
      const deadline = Date.now() + 180_000;
      while (!sweepId && Date.now() < deadline) {
        const list = (await (await probe.request.get(`${app.url}/api/v1/studios/${studioId}/sweeps?status=done&pageSize=50`)).json()) as { sweeps: { id: string; axes: unknown[] }[] };
        sweepId = list.sweeps.find((s) => s.axes.length >= 2)?.id ?? null;
        if (!sweepId) await new Promise((resolve) => setTimeout(resolve, 1000));
      }
      const catalogues = (await (await probe.request.get(`${app.url}/api/v1/studios/${studioId}/catalogues`)).json()) as { catalogues?: { id: string }[] };
      await probe.close();
      const ids: Ids = { studioId, sweepId, catalogueId: catalogues.catalogues?.[0]?.id ?? null };

      // Beside each time, where it went (of the best visit): when the server's HTML had arrived, the
      // scripts loaded by then, and the API requests the page made before its main content showed.
      const rows: (string | number)[][] = [["page", "first visit [ms]", "ratio to sign-in", `under ${TARGET_MS} ms`, "HTML in [ms]", "scripts [kB]", "API calls before"]];
      let peerMs = Number.NaN;
      const only = process.env.KD_BENCH_PAGES ? new Set(process.env.KD_BENCH_PAGES.split(",").map((name) => name.trim())) : null;
      const unknownPages = only ? [...only].filter((name) => !CASES.some((c) => c.name === name)) : [];
      if (unknownPages.length) throw new Error(`KD_BENCH_PAGES names no such page: ${unknownPages.join(", ")}; pages: ${CASES.map((c) => c.name).join(", ")}`);
      for (const c of CASES) {
        if (only && !only.has(c.name) && !c.name.endsWith("(peer)")) continue;
        const target = c.path(ids);
        if (!target) {
          rows.push([c.name, "—", "—", "not measured (no such page in this demo yet)"]);
          continue;
        }
        // Best of three fresh contexts: each is a first visit (empty cache), the best damps the other helpers' load.
        let best = Number.POSITIVE_INFINITY;
        let profile: VisitProfile | null = null;
        let failure: string | null = null;
        for (let attempt = 0; attempt < 3 && failure === null; attempt++) {
          const context = await browser.newContext({ storageState: c.as === "engineer" ? engineer : c.as === "owner" ? owner : c.as === "admin" ? admin : undefined, viewport: { width: 1440, height: 900 } });
          const page = await context.newPage();
          const started = performance.now();
          try {
            await page.goto(`${app.url}${target}`, { waitUntil: "commit" });
            await c.ready(page).waitFor({ state: "visible", timeout: 60_000 });
            const took = performance.now() - started;
            if (took < best) {
              best = took;
              profile = await visitProfile(page);
            }
          } catch (error) {
            // One page whose main content never shows is a finding for the table, not the end of the run.
            failure = `main content not visible within 60 s at ${new URL(page.url()).pathname} (${(error as Error).message.split("\n")[0]})`;
          } finally {
            await context.close();
          }
        }
        if (failure !== null && !Number.isFinite(best)) {
          console.log(`${c.name}: ${failure}`);
          rows.push([c.name, "—", "—", "NOT MEASURED: see above"]);
          continue;
        }
        if (c.name.endsWith("(peer)")) peerMs = best;
        console.log(`${c.name}: ${Math.round(best)} ms`);
        rows.push([
          c.name,
          Math.round(best),
          (best / peerMs).toFixed(2),
          best < TARGET_MS ? "yes" : "NO",
          profile ? Math.round(profile.htmlMs) : "—",
          profile ? Math.round(profile.scriptKb) : "—",
          profile ? profile.apiCalls : "—",
        ]);
      }
      console.log(table(rows));
      console.log(`load average at end: ${load()}`);
    } finally {
      await browser.close();
      app.stop();
    }
  },
};
