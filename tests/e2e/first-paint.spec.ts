/**
 * Issue 22 (speed): a page's main content comes with its HTML, so it shows before any script has
 * loaded, hydrated and asked the API again. Tried as the demo studio's owner, in a browser with
 * JavaScript switched off: whatever each page shows there, the server rendered. With scripts on, the
 * sweep page's map draws every cell from the answer its HTML asked for, in the commit that hydrates it.
 */
import { VERDICT_STYLES } from "@/lib/charts/categories";
import type { Verdict } from "@/lib/physics/types";
import { expect, signInWithPassword, test } from "./helpers";

const DEMO_OWNER = { email: "maren@gannetyard.test", password: "crateslide-owner", studio: "Gannet Yard Games" };

test("the studios, studio home, sweeps, sweep, cell, catalogues, catalogue, snapshots, members, tokens and webhooks pages arrive with their content", async ({ page, browser }) => {
  test.setTimeout(240_000);
  await signInWithPassword(page, DEMO_OWNER.email, DEMO_OWNER.password);
  const studios = (await (await page.request.get("/api/v1/studios")).json()) as { studios: { id: string; name: string }[] };
  const studioId = studios.studios.find((studio) => studio.name === DEMO_OWNER.studio)!.id;
  const base = `/studios/${studioId}`;
  // The demo computes its sweeps after start-up: wait for a finished one with a map (two axes or more).
  let sweep: { id: string; name: string; cellsDone: number } | undefined;
  await expect
    .poll(
      async () => {
        const list = (await (await page.request.get(`/api/v1${base}/sweeps?status=done&pageSize=50`)).json()) as { sweeps: { id: string; name: string; cellsDone: number; axes: unknown[] }[] };
        sweep = list.sweeps.find((candidate) => candidate.axes.length >= 2);
        return sweep !== undefined;
      },
      { timeout: 180_000 },
    )
    .toBe(true);
  const done = sweep!;
  const cell = (await (await page.request.get(`/api/v1${base}/sweeps/${done.id}/cells/0`)).json()) as { cell: { verdict: Verdict } };
  const catalogues = (await (await page.request.get(`/api/v1${base}/catalogues`)).json()) as { catalogues: { id: string; name: string }[] };
  const members = (await (await page.request.get(`/api/v1${base}/members`)).json()) as { members: { email: string }[] };

  const noScript = await browser.newContext({ javaScriptEnabled: false, storageState: await page.context().storageState() });
  const bare = await noScript.newPage();
  try {
    await bare.goto("/studios");
    await expect(bare.getByTestId("studio-list").getByRole("link", { name: DEMO_OWNER.studio })).toBeVisible();

    // The studio home's compute card (balance and this month's use) and its finished sweeps.
    await bare.goto(base);
    await expect(bare.getByTestId("home-balance")).toContainText("min");
    await expect(bare.getByTestId("verdict-bar").first()).toBeVisible();

    await bare.goto(`${base}/sweeps`);
    await expect(bare.getByTestId(`sweep-row-${done.id}`)).toContainText(done.name);

    // The sweep's frame (the map itself is drawn by script from the cells the client asks for).
    await bare.goto(`${base}/sweeps/${done.id}`);
    await expect(bare.getByTestId("sweep-name")).toHaveText(done.name);
    await expect(bare.getByTestId("sweep-cells-done")).toContainText(done.cellsDone.toLocaleString("en"));

    // The cell's stored verdict and metrics are there before the engine recomputes its series.
    await bare.goto(`${base}/sweeps/${done.id}/cells/0`);
    await expect(bare.getByTestId("cell-verdict")).toHaveText(VERDICT_STYLES[cell.cell.verdict].label);
    await expect(bare.getByTestId("cell-metrics")).toContainText("Integrator steps");

    // The demo studio has a catalogue (the seed's).
    expect(catalogues.catalogues.length).toBeGreaterThan(0);
    await bare.goto(`${base}/catalogues`);
    await expect(bare.getByTestId("catalogues-table")).toContainText(catalogues.catalogues[0].name);
    await bare.goto(`${base}/catalogues/${catalogues.catalogues[0].id}`);
    await expect(bare.getByTestId("catalogue-title")).toContainText(catalogues.catalogues[0].name);

    // The demo studio has a snapshot (the seed's loading bay).
    await bare.goto(`${base}/snapshots`);
    await expect(bare.getByTestId("snapshots-table")).toBeVisible();

    await bare.goto(`${base}/members`);
    for (const member of members.members) await expect(bare.getByTestId(`member-${member.email}`)).toBeVisible();

    await bare.goto(`${base}/tokens`);
    await expect(bare.getByTestId("tokens-table").or(bare.getByText("No tokens yet."))).toBeVisible();

    await bare.goto(`${base}/webhooks`);
    await expect(bare.getByTestId("webhook-endpoints").or(bare.getByText("No endpoints yet."))).toBeVisible();
  } finally {
    await noScript.close();
  }

  // With scripts on, each page takes over the server's HTML as it is: React reports no hydration mismatch.
  const mismatches: string[] = [];
  page.on("console", (message) => {
    if (message.type() === "error" && /hydrat/i.test(message.text())) mismatches.push(`${page.url()}: ${message.text()}`);
  });
  page.on("pageerror", (error) => {
    if (/hydrat/i.test(error.message)) mismatches.push(`${page.url()}: ${error.message}`);
  });
  const pages: [string, string][] = [
    ["/studios", "studio-list"],
    [base, "home-balance"],
    [`${base}/catalogues`, "catalogues-table"],
    [`${base}/snapshots`, "snapshots-table"],
    [`${base}/sweeps`, `sweep-row-${done.id}`],
    [`${base}/sweeps/${done.id}/cells/0`, "cell-verdict"],
    [`${base}/catalogues/${catalogues.catalogues[0].id}`, "catalogue-title"],
    [`${base}/members`, "members-table"],
  ];
  for (const [path, testId] of pages) {
    await page.goto(path);
    await expect(page.getByTestId(testId)).toBeVisible();
    // Hydration runs as the page's scripts execute, before the load event.
    await page.waitForLoadState("load");
  }
  // The sweep page asks for its map's cells from the HTML, before its scripts have loaded: the map draws
  // every cell of the finished sweep from that one answer (the cells hook does not ask again), and the
  // inline script is taken over as sent (no mismatch reported above).
  const firstCellsReads: string[] = [];
  page.on("request", (request) => {
    if (/\/cells\?after=0$/.test(request.url())) firstCellsReads.push(request.url());
  });
  await page.goto(`${base}/sweeps/${done.id}`);
  await expect(page.locator('canvas[data-plot][data-pending-cells="0"]').first()).toBeVisible();
  await page.waitForLoadState("load");
  expect(firstCellsReads).toHaveLength(1);
  expect(mismatches).toEqual([]);

  // When the early answer is in before the scripts run (held here until it is, as a slow script
  // download would), the map's first draw already has every cell: it never draws them as not
  // computed first and again once the query has answered.
  const held = await browser.newContext({ storageState: await page.context().storageState() });
  const late = await held.newPage();
  try {
    let cellsArrived: () => void = () => {};
    const arrived = new Promise<void>((resolve) => (cellsArrived = resolve));
    late.on("requestfinished", (request) => {
      if (/\/cells\?after=0$/.test(request.url())) cellsArrived();
    });
    await late.route(/\/_next\/static\/chunks\/.*\.js$/, async (route) => {
      await arrived;
      await route.continue();
    });
    // Every value the map's canvas takes for its not-computed count, in order.
    await late.addInitScript(() => {
      const seen: string[] = [];
      (window as unknown as { __pendingSeen: string[] }).__pendingSeen = seen;
      new MutationObserver((records) => {
        for (const record of records) seen.push((record.target as Element).getAttribute("data-pending-cells") ?? "");
      }).observe(document, { subtree: true, attributes: true, attributeFilter: ["data-pending-cells"] });
    });
    await late.goto(`${base}/sweeps/${done.id}`);
    await expect(late.locator('canvas[data-plot][data-pending-cells="0"]').first()).toBeVisible();
    const seen = await late.evaluate(() => (window as unknown as { __pendingSeen: string[] }).__pendingSeen);
    expect(seen[0]).toBe("0");
  } finally {
    await held.close();
  }
});
