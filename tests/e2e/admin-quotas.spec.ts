import { expect, sameOrigin, signInWithPassword, test, uniqueEmail } from "./helpers";

// The demo platform admin seeded by KICKDRIFT_DEMO=1 (server/seed.ts).
const DEMO_ADMIN = { email: "ops@kickdrift.test", password: "kickdrift-operator" };

/**
 * A crate pile of the invented "Sandpiper Crate Co": 15 stiffnesses × 20 restitutions = 300 box
 * cells of 80 discs, about 100 ms of compute each by the cost model, in chunks of about 2 s: long
 * enough (about 15 s on two threads of a quiet machine) for the cap to meet it while it runs.
 */
const CRATE_PILE = {
  name: "Sandpiper crate pile: stiffness × restitution",
  scenario: {
    scene: { kind: "box", count: 80, massKg: 0.05, radiusM: 0.01, widthM: 0.4, heightM: 0.4, maxSpeedMPerS: 0.5, gravityMPerS2: 9.81 },
    contact: { model: "linear", stiffness: 2000, damping: { kind: "restitution", value: 0.5 } },
    integrator: "velocity-verlet",
    dtS: 0.001,
    substeps: 4,
    durationS: 1,
    seed: 3,
  },
  axes: [
    { parameter: "contact.stiffness", spacing: "log", from: 500, to: 50000, count: 15 },
    { parameter: "contact.damping.restitution", spacing: "linear", from: 0.2, to: 0.8, count: 20 },
  ],
};

/** The cap the admin sets while the sweep runs: 0.1 min = 6,000 ms, far below the sweep's ~30,000 ms. */
const LOW_CAP_MINUTES = "0.1";

test("an admin lowers a studio's cap under a running sweep: it pauses with the reason, resumes after a raise and finishes; the owner gets the 80 % and 100 % alerts once each", async ({ browser }) => {
  test.setTimeout(300_000);
  const ownerEmail = uniqueEmail("owner");
  const studioName = `Sandpiper Crate Co ${Date.now().toString(36)}`;

  // --- A new user signs up, creates a studio (30 welcome minutes) and starts a sweep.
  const ownerContext = await browser.newContext();
  const owner = await ownerContext.newPage();
  await owner.goto("/signup");
  await owner.getByLabel("Your name").fill("Wren Okafor");
  await owner.getByLabel("Work e-mail").fill(ownerEmail);
  await owner.getByLabel("Password", { exact: true }).fill("crate-pile-tumble-7");
  await owner.getByRole("button", { name: "Create account" }).click();
  await expect(owner).toHaveURL(/\/studios$/);
  await owner.getByLabel("Studio name").fill(studioName);
  await owner.getByRole("button", { name: "Create studio" }).click();
  await expect(owner).toHaveURL(/\/studios\/[^/]+$/);
  const studioPath = new URL(owner.url()).pathname;
  const studioId = studioPath.split("/").pop()!;

  // The quote shows the studio's limits before submitting.
  const quote = await owner.request.post(`/api/v1/studios/${studioId}/quotes`, { data: { spec: CRATE_PILE }, headers: sameOrigin(owner) });
  expect(quote.status()).toBe(200);
  const { quote: q } = (await quote.json()) as { quote: { cells: number; estimatedComputeMs: number; ceilingMs: number; limits: { monthlyComputeMs: number; violations: unknown[] } } };
  expect(q.cells).toBe(300);
  expect(q.limits.violations).toEqual([]);
  expect(q.estimatedComputeMs).toBeGreaterThan(6_000 * 2);

  // --- The admin finds the studio and types a monthly cap below what the sweep needs. It is saved
  // the moment the sweep is submitted: a quiet machine finishes the whole sweep in about 15 s, less
  // than an admin's sign-in and search take, so the admin is ready first (no race with the runner).
  const adminContext = await browser.newContext();
  const admin = await adminContext.newPage();
  await signInWithPassword(admin, DEMO_ADMIN.email, DEMO_ADMIN.password);
  await admin.goto("/admin");
  await admin.getByLabel("Filter by name or id").fill(studioName);
  await admin.getByRole("link", { name: studioName }).click();
  await expect(admin).toHaveURL(new RegExp(`/admin/studios/${studioId}$`));
  await admin.getByLabel("Monthly compute cap (minutes)").fill(LOW_CAP_MINUTES);
  await admin.getByLabel("Reason (recorded in the audit log)").first().fill("testing the cap on a running sweep");

  const submitted = await owner.request.post(`/api/v1/studios/${studioId}/sweeps`, { data: { spec: CRATE_PILE, acceptedQuoteMs: q.ceilingMs }, headers: sameOrigin(owner) });
  expect(submitted.status()).toBe(201);
  const { sweep } = (await submitted.json()) as { sweep: { id: string } };
  await admin.getByRole("button", { name: "Save quotas" }).click();
  await expect(admin.getByText("Quotas saved.")).toBeVisible();
  await owner.goto(`${studioPath}/sweeps/${sweep.id}`);

  // --- The owner's sweep pauses with the reason; finished cells stay.
  await expect(owner.getByTestId("sweep-reason")).toHaveText("monthly compute cap reached", { timeout: 90_000 });
  await expect(owner.getByTestId("sweep-status").first()).toHaveText("paused");
  await owner.screenshot({ path: test.info().outputPath("sweep-paused-by-cap.png"), fullPage: true });
  const pausedView = (await (await owner.request.get(`/api/v1/studios/${studioId}/sweeps/${sweep.id}`)).json()) as { sweep: { status: string; cellsDone: number; cells: number } };
  expect(pausedView.sweep.status).toBe("paused");
  expect(pausedView.sweep.cellsDone).toBeGreaterThan(0);
  expect(pausedView.sweep.cellsDone).toBeLessThan(300);
  // The admin's studio page shows the usage over the cap and the audited change.
  await admin.reload();
  await expect(admin.getByTestId("studio-month")).toContainText("of 0.1 min");
  await expect(admin.getByTestId("audit-table")).toContainText("Quota change");
  await expect(admin.getByTestId("audit-table")).toContainText("testing the cap on a running sweep");
  await admin.screenshot({ path: test.info().outputPath("admin-studio-capped.png"), fullPage: true });

  // --- The admin raises the cap back to the plan default (blank field); the sweep resumes on its own and finishes.
  await admin.getByLabel("Monthly compute cap (minutes)").fill("");
  await admin.getByLabel("Reason (recorded in the audit log)").first().fill("cap restored");
  await admin.getByRole("button", { name: "Save quotas" }).click();
  await expect(admin.getByText("Quotas saved.")).toBeVisible();
  await expect(owner.getByTestId("sweep-status").first()).toHaveText("done", { timeout: 180_000 });
  await expect(owner.getByTestId("sweep-cells-done")).toContainText("300 / 300");
  await expect(owner.getByTestId("sweep-reason")).toHaveCount(0);

  // --- The owner received the 80 % and the 100 % alert, once each.
  // (read by the platform admin: the demo mailbox is theirs alone)
  await admin.goto("/mail");
  const mine = admin.getByTestId("mail-message").filter({ hasText: ownerEmail });
  await expect(mine.filter({ hasText: `${studioName} reached its monthly compute cap` })).toHaveCount(1);
  await expect(mine.filter({ hasText: `${studioName} has used 80% of its monthly compute cap` })).toHaveCount(1);
  // Still once each a little later (the runner kept checking while the sweep finished).
  await admin.waitForTimeout(2_000);
  await admin.reload();
  await expect(mine.filter({ hasText: "monthly compute cap" })).toHaveCount(2);

  await ownerContext.close();
  await adminContext.close();
});
