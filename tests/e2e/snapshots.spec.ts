import { CRATESLIDE_SNAPSHOT_JSON } from "../../lib/snapshots/demo";
import { CRATES_WITH_TWO_MISTAKES, expect, openDemoStudioSection, test } from "./helpers";

/** Two mistakes: a negative mass and a crate pushed into its neighbour. */
const WITH_MISTAKES = JSON.stringify(CRATES_WITH_TWO_MISTAKES);

test("an engineer uploads a snapshot, sees its problems by disc number and field, checks the drawing of the scene, saves the loading bay and runs the sweep suggested from it, whose map has stable and unstable cells", async ({ page }) => {
  test.setTimeout(180_000);
  const pageErrors: string[] = [];
  page.on("pageerror", (error) => pageErrors.push(error.message));

  await openDemoStudioSection(page, "Snapshots");
  await expect(page.getByRole("heading", { name: "Upload a snapshot" })).toBeVisible();
  // The demo snapshot is listed already.
  await expect(page.getByTestId("snapshots-table")).toContainText("Crateslide loading bay");

  // --- A file with two mistakes: both named at once with their paths; nothing can be saved.
  await page.getByTestId("snapshot-file").setInputFiles({ name: "bay-broken.json", mimeType: "application/json", buffer: Buffer.from(WITH_MISTAKES) });
  const problems = page.getByTestId("snapshot-problem");
  await expect(problems).toHaveCount(2);
  // Named as users count (the file's first body is disc 1), the field in words beside its name in the file.
  await expect(problems.nth(0)).toHaveText("Disc 1, mass (massKg): mass must be > 0 and ≤ 1,000,000 (kg); got -25");
  // Discs 2 and 3 start 0.3 m apart with radii 0.3 m: 0.3 m of overlap, 100 % of the smaller radius.
  await expect(problems.nth(1)).toHaveText("Disc 2: discs 2 and 3 start overlapping by 100% of the smaller radius (tolerance 1%)");
  await expect(page.getByTestId("snapshot-preview")).toHaveCount(0);
  await expect(page.getByTestId("snapshot-save")).toBeDisabled();

  // --- The example file: valid, saved, listed.
  await page.getByTestId("snapshot-file").setInputFiles({ name: "crateslide-loading-bay.json", mimeType: "application/json", buffer: Buffer.from(CRATESLIDE_SNAPSHOT_JSON) });
  await expect(page.getByText("41 discs and 4 walls, every field valid.")).toBeVisible();
  // The scene drawn before saving: every disc numbered from 1 in file order, every wall.
  const preview = page.getByTestId("snapshot-preview");
  await expect(preview.getByTestId("preview-disc")).toHaveCount(41);
  await expect(preview.getByTestId("preview-wall")).toHaveCount(4);
  await expect(preview.getByTestId("preview-disc").first()).toHaveAttribute("data-number", "1");
  await expect(preview.getByTestId("preview-disc").first().locator("text")).toHaveText("1");
  await expect(preview.getByTestId("preview-disc").last().locator("text")).toHaveText("41");
  await expect(preview.getByTestId("preview-disc").first().locator("title")).toHaveText(/^Disc 1: /);
  await preview.scrollIntoViewIfNeeded();
  await page.screenshot({ path: "docs/screens/snapshot-preview.png", fullPage: true });
  await page.getByLabel("Snapshot name").fill("Loading bay, night shift");
  await page.getByTestId("snapshot-save").click();
  await expect(page.getByText(/Saved Loading bay, night shift v1 \(41 discs, 4 walls\)/)).toBeVisible();
  await expect(page.getByTestId("snapshots-table")).toContainText("Loading bay, night shift");

  // --- New sweep from it: the builder opens on the snapshot's scene; quote, confirm, run, done.
  await page.getByText(/Saved Loading bay/).getByRole("link", { name: "New sweep from this snapshot" }).click();
  await expect(page).toHaveURL(/\/sweeps\/new\?snapshot=/);
  await expect(page.getByTestId("snapshot-scene-summary")).toContainText("41 discs and 4 walls");
  // The first sweep is placed from the scene itself, and says why: the forklift-shoved crate (disc 35, 4 m/s) into the block sets the stiffness.
  const why = page.getByTestId("snapshot-suggestion");
  await expect(why).toContainText("Why this sweep");
  await expect(why).toContainText(/Hardest impact: disc \d+ and disc 35, closing at up to 4\.01 m\/s/);
  await expect(why).toContainText("ω·h < 2");
  await expect(why).toContainText(/The sweep: contact stiffness [\d.]+ kN\/m – [\d.]+ MN\/m \(5 values, log\) × frame step 1\/960 s/);
  await why.scrollIntoViewIfNeeded();
  await page.screenshot({ path: "docs/screens/snapshot-suggested-sweep.png" });
  await expect(page.getByTestId("quote-panel").getByTestId("quote-cells")).toHaveText("25");
  await page.getByRole("button", { name: "Review and run" }).click();
  // The spec goes by reference to the stored snapshot (its discs unchanged), so a large snapshot fits the JSON body limit.
  const submitted = page.waitForRequest((request) => request.method() === "POST" && /\/api\/v1\/studios\/[^/]+\/sweeps$/.test(new URL(request.url()).pathname));
  await page.getByTestId("confirm-sweep").getByRole("button", { name: "Run sweep" }).click();
  const scene = ((await submitted).postDataJSON() as { spec: { scenario: { scene: Record<string, unknown> } } }).spec.scenario.scene;
  expect(scene).toMatchObject({ kind: "snapshot", snapshotId: expect.stringMatching(/^snp_/) });
  expect(scene).not.toHaveProperty("bodies");
  await expect(page).toHaveURL(/\/sweeps\/(?!new)[^/?]+$/);
  await expect(page.getByTestId("sweep-progress")).toHaveAttribute("aria-valuenow", "100", { timeout: 90_000 });
  await expect(page.getByTestId("sweep-status").first()).toHaveText("done");
  // The suggested map is worth reading: it has stable cells, and it reaches the instability (deep overlaps on the soft side, the step bound on the stiff, coarse side).
  await expect(page.locator("canvas[aria-roledescription='stability map']").first()).toBeVisible();
  await expect(page.getByTestId("verdict-count-stable")).toContainText(/Stable: [1-9]/);
  await expect(page.getByTestId("verdict-count-deep-overlap")).toContainText(/Deep overlap: [1-9]/);
  const stepFailures = (await page.getByTestId("verdict-count-step-unstable").innerText()).match(/\d+$/)?.[0];
  const blowUps = (await page.getByTestId("verdict-count-exploded").innerText()).match(/\d+$/)?.[0];
  expect(Number(stepFailures) + Number(blowUps)).toBeGreaterThan(0);
  expect(pageErrors).toEqual([]);
});
