import { CRATES_WITH_TWO_MISTAKES, expect, openDemoStudioSection, test } from "./helpers";

/** The three crates with both mistakes fixed (the third 0.8 m from the second): valid, so the page's own check lets it be saved. */
const [first, second, third] = CRATES_WITH_TWO_MISTAKES.bodies;
const VALID = JSON.stringify({ bodies: [{ ...first, massKg: 25 }, second, { ...third, xM: 3.8 }] });

/** What reaches the server instead: a negative mass, and the third crate pushed into the second. */
const REFUSED = JSON.stringify(CRATES_WITH_TWO_MISTAKES);

test("a snapshot the server refuses on save: the form shows the server's problems naming each disc as a user counts it and the field in words, and nothing is saved", async ({ page }) => {
  test.setTimeout(120_000);
  await openDemoStudioSection(page, "Snapshots");
  await expect(page.getByRole("heading", { name: "Upload a snapshot" })).toBeVisible();

  // The server has the last word: the file changes between the page's check and the save (as a page
  // left open across an update of the rules would send), so the refusal comes from the server alone.
  let swapped = false;
  await page.route("**/api/v1/studios/*/snapshots", async (route) => {
    const request = route.request();
    const body = request.postDataBuffer();
    if (request.method() !== "POST" || !body) return route.continue();
    const text = body.toString("latin1");
    swapped = text.includes(VALID);
    await route.continue({ postData: Buffer.from(text.replace(VALID, REFUSED), "latin1") });
  });

  await page.getByTestId("snapshot-file").setInputFiles({ name: "bay-three-crates.json", mimeType: "application/json", buffer: Buffer.from(VALID) });
  await expect(page.getByText("3 discs and 0 walls, every field valid.")).toBeVisible();
  await expect(page.getByTestId("snapshot-problem")).toHaveCount(0);
  await page.getByLabel("Snapshot name").fill("Three crates, refused");
  await page.getByTestId("snapshot-save").click();

  const refusal = page.getByRole("alert").filter({ hasText: "The snapshot was not saved." });
  await expect(refusal).toBeVisible();
  expect(swapped).toBe(true);
  // Each of the server's issues under its place in words (issue fields are file.bodies.0.massKg and file.bodies.1…),
  // numbered from 1 as the problem list and the scene drawing number them, never the 0-based path alone.
  const issues = refusal.getByTestId("upload-error-issues").getByRole("listitem");
  await expect(issues).toHaveCount(2);
  await expect(issues.nth(0)).toHaveText("Disc 1, mass (massKg): mass must be > 0 and ≤ 1,000,000 (kg); got -25");
  // Discs 2 and 3 start 0.3 m apart with radii 0.3 m: 0.3 m of overlap, 100 % of the smaller radius.
  await expect(issues.nth(1)).toHaveText(/^Disc 2: discs 2 and 3 start overlapping by 100% of the smaller radius/);
  await expect(refusal).not.toContainText("bodies.0");
  // Nothing was stored: the list does not show it.
  await expect(page.getByText(/^Saved Three crates/)).toHaveCount(0);
  await expect(page.getByTestId("snapshots-table")).not.toContainText("Three crates, refused");
});
