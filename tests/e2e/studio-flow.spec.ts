import { expect, linkFromMailbox, signInWithPassword, test, uniqueEmail } from "./helpers";

// The demo owner seeded by KICKDRIFT_DEMO=1 (server/seed.ts prints these sign-ins at start).
const DEMO_OWNER = { email: "maren@gannetyard.test", password: "crateslide-owner", studio: "Gannet Yard Games" };

test("a new owner builds a studio and an invited engineer joins it through the mailed links", async ({ browser }) => {
  // Sign-up, invitation, role confirmations and the phone layout: more steps than the default 90 s allows on a loaded machine.
  test.setTimeout(180_000);
  const ownerEmail = uniqueEmail("noor");
  const engineerEmail = uniqueEmail("pavel");
  const studioName = "Driftwood Pucks";

  // --- The owner signs up: the API's field errors appear beside the fields, then the account is created.
  const ownerContext = await browser.newContext();
  const owner = await ownerContext.newPage();
  await owner.goto("/signup");
  await owner.getByLabel("Your name").fill("Noor Haddad");
  await owner.getByLabel("Work e-mail").fill(ownerEmail);
  await owner.getByLabel("Password", { exact: true }).fill("short");
  await owner.getByRole("button", { name: "Create account" }).click();
  await expect(owner.locator("#signup-password-error")).toContainText("10");
  await owner.getByLabel("Password", { exact: true }).fill("rink-wall-bounce-42");
  await owner.getByRole("button", { name: "Create account" }).click();
  await expect(owner).toHaveURL(/\/studios$/);

  // --- Creates a studio and lands on its home as owner.
  await owner.getByLabel("Studio name").fill(studioName);
  await owner.getByRole("button", { name: "Create studio" }).click();
  await expect(owner).toHaveURL(/\/studios\/[^/]+$/);
  await expect(owner.getByTestId("studio-name")).toHaveText(studioName);
  await expect(owner.getByTestId("my-role")).toContainText("owner");
  const studioUrl = new URL(owner.url()).pathname;
  await owner.screenshot({ path: test.info().outputPath("studio-home-owner.png"), fullPage: true });

  // --- Invites an engineer from the members page.
  await owner.getByRole("link", { name: "Members", exact: true }).click();
  await expect(owner).toHaveURL(`${studioUrl}/members`);
  await owner.getByLabel("E-mail", { exact: true }).fill(engineerEmail);
  await owner.getByLabel("Role", { exact: true }).selectOption("engineer");
  await owner.getByRole("button", { name: "Send invitation" }).click();
  await expect(owner.getByText(`Invitation e-mailed to ${engineerEmail}`)).toBeVisible();
  await expect(owner.getByTestId("invites-table")).toContainText(engineerEmail);
  await owner.screenshot({ path: test.info().outputPath("studio-members-owner.png"), fullPage: true });

  // --- The only owner cannot demote themself: the change asks first, then the API's reason is shown and the role stays.
  await owner.getByLabel(`Role of ${ownerEmail}`).selectOption("engineer");
  const selfDemotion = owner.getByTestId("confirm-role-change");
  await expect(selfDemotion).toBeVisible();
  await expect(selfDemotion).toContainText("Change your own role from owner to engineer?");
  await selfDemotion.getByRole("button", { name: "Change role" }).click();
  await expect(selfDemotion).toContainText("at least one owner");
  await selfDemotion.getByRole("button", { name: "Keep as it is" }).click();
  await expect(selfDemotion).toBeHidden();
  await expect(owner.getByLabel(`Role of ${ownerEmail}`)).toHaveValue("owner");

  // --- The engineer, in a browser of their own, opens the invitation from the local mailbox.
  const engineerContext = await browser.newContext();
  const engineer = await engineerContext.newPage();
  const inviteLink = await linkFromMailbox(engineer, engineerEmail, "/invite/");
  await engineer.goto(inviteLink);
  await expect(engineer.getByTestId("invite-studio")).toHaveText(studioName);
  await expect(engineer.getByTestId("invite-role")).toHaveText("engineer");

  // --- Not signed in: asks for a sign-in link to the invited address and opens it from the mailbox.
  await engineer.getByRole("button", { name: `E-mail a sign-in link to ${engineerEmail}` }).click();
  await expect(engineer.getByText("We sent a sign-in link to")).toBeVisible();
  const magicLink = await linkFromMailbox(engineer, engineerEmail, "/api/auth/callback/email");
  await engineer.goto(magicLink);

  // --- Back on the invitation, now signed in as the invitee: it is accepted and the studio opens, role engineer.
  await expect(engineer).toHaveURL(new RegExp(`${studioUrl}$`));
  await expect(engineer.getByTestId("studio-name")).toHaveText(studioName);
  await expect(engineer.getByTestId("my-role")).toContainText("engineer");
  await expect(engineer.getByTestId("members-table")).toContainText(ownerEmail);
  await expect(engineer.getByTestId(`member-${engineerEmail}`)).toContainText("engineer");
  // Owner-only tabs are not offered to an engineer.
  await expect(engineer.getByRole("link", { name: "Members", exact: true })).toHaveCount(0);

  // --- The owner's actions on the members page are refused to the engineer with a 403 page.
  const membersPage = await engineer.goto(`${studioUrl}/members`);
  expect(membersPage?.status()).toBe(403);
  await expect(engineer.getByTestId("forbidden")).toBeVisible();
  await expect(engineer.getByTestId("forbidden")).toContainText("403");
  await expect(engineer.getByRole("button", { name: "Send invitation" })).toHaveCount(0);
  const tokensPage = await engineer.goto(`${studioUrl}/tokens`);
  expect(tokensPage?.status()).toBe(403);
  await expect(engineer.getByTestId("forbidden")).toBeVisible();

  // --- Another studio's URL is a plain 404, the same as a studio that does not exist.
  const demoOwnerContext = await browser.newContext();
  const demoOwner = await demoOwnerContext.newPage();
  await signInWithPassword(demoOwner, DEMO_OWNER.email, DEMO_OWNER.password);
  await demoOwner.getByRole("link", { name: new RegExp(DEMO_OWNER.studio) }).click();
  await expect(demoOwner).toHaveURL(/\/studios\/[^/]+$/);
  const demoStudioUrl = new URL(demoOwner.url()).pathname;
  expect(demoStudioUrl).not.toBe(studioUrl);

  const otherStudio = await engineer.goto(demoStudioUrl);
  expect(otherStudio?.status()).toBe(404);
  await expect(engineer.getByTestId("not-found")).toBeVisible();
  await expect(engineer.getByText(DEMO_OWNER.studio)).toHaveCount(0);
  const missingStudio = await engineer.goto("/studios/std_doesnotexist0000000000");
  expect(missingStudio?.status()).toBe(404);

  // --- A promotion to owner asks first and says what it gives; "Keep as it is" changes nothing.
  await owner.goto(`${studioUrl}/members`);
  await owner.getByLabel(`Role of ${engineerEmail}`).selectOption("owner");
  const promotion = owner.getByTestId("confirm-role-change");
  await expect(promotion).toBeVisible();
  await expect(promotion).toContainText(`Make ${engineerEmail} an owner?`);
  await expect(promotion).toContainText("Only another owner can take it back.");
  await owner.screenshot({ path: test.info().outputPath("members-confirm-role-change.png") });
  await promotion.getByRole("button", { name: "Keep as it is" }).click();
  await expect(promotion).toBeHidden();
  await expect(owner.getByLabel(`Role of ${engineerEmail}`)).toHaveValue("engineer");
  // Confirmed, it applies.
  await owner.getByLabel(`Role of ${engineerEmail}`).selectOption("finance");
  await expect(promotion).toContainText(`Change the role of ${engineerEmail} from engineer to finance?`);
  await promotion.getByRole("button", { name: "Change role" }).click();
  await expect(owner.getByText("Role changed to finance.")).toBeVisible();
  await expect(owner.getByLabel(`Role of ${engineerEmail}`)).toHaveValue("finance");
  // On a phone the members table stacks instead of scrolling sideways.
  await owner.setViewportSize({ width: 390, height: 844 });
  await expect(owner.getByTestId(`member-${engineerEmail}`)).toBeVisible();
  const overflow = await owner.evaluate(() => ({ page: document.documentElement.scrollWidth - window.innerWidth, table: (() => { const t = document.querySelector('[data-testid="members-table"]') as HTMLElement; return t.scrollWidth - t.clientWidth; })() }));
  expect(overflow).toEqual({ page: 0, table: 0 });
  await owner.screenshot({ path: test.info().outputPath("members-390x844.png"), fullPage: true });
  await owner.setViewportSize({ width: 1440, height: 900 });

  // --- And the owner sees the member (now finance) in the member list on the studio home.
  await owner.goto(studioUrl);
  await expect(owner.getByTestId(`member-${engineerEmail}`)).toContainText("finance");
  await owner.screenshot({ path: test.info().outputPath("studio-home-owner-after.png"), fullPage: true });
  await owner.evaluate(() => {
    document.documentElement.setAttribute("data-theme", "dark");
  });
  await owner.screenshot({ path: test.info().outputPath("studio-home-owner-dark.png"), fullPage: true });

  await Promise.all([ownerContext.close(), engineerContext.close(), demoOwnerContext.close()]);
});

test("signed-out visitors are sent to sign-in and come back after it", async ({ page }) => {
  await page.goto("/studios");
  await expect(page).toHaveURL(/\/signin\?callbackUrl=%2Fstudios/);
  await page.getByLabel("E-mail", { exact: true }).fill(DEMO_OWNER.email);
  await page.getByLabel("Password", { exact: true }).fill("not-the-password");
  await page.getByRole("button", { name: "Sign in", exact: true }).click();
  await expect(page.getByText("Invalid e-mail or password.")).toBeVisible();
  await page.getByLabel("Password", { exact: true }).fill(DEMO_OWNER.password);
  await page.getByRole("button", { name: "Sign in", exact: true }).click();
  await expect(page).toHaveURL(/\/studios$/);
  await expect(page.getByTestId("studio-list")).toContainText(DEMO_OWNER.studio);
});

test("an owner creates an API token whose secret is shown once, then revokes it", async ({ page }) => {
  await signInWithPassword(page, DEMO_OWNER.email, DEMO_OWNER.password);
  await page.getByRole("link", { name: new RegExp(DEMO_OWNER.studio) }).click();
  await page.getByRole("link", { name: "API tokens", exact: true }).click();
  await expect(page).toHaveURL(/\/tokens$/);

  await page.getByLabel("Token name").fill("rink build agent");
  await page.getByLabel("write").check();
  await page.getByRole("button", { name: "Create token" }).click();
  const secret = (await page.getByTestId("token-secret").textContent())?.trim() ?? "";
  expect(secret).toMatch(/^kd_[A-Za-z0-9_-]{20,}$/);
  const row = page.getByTestId("tokens-table").getByRole("row").filter({ hasText: "rink build agent" });
  await expect(row).toContainText("read, write");
  await expect(row).toContainText(secret.slice(0, 6));
  await expect(row).toContainText("active");
  await page.screenshot({ path: test.info().outputPath("studio-tokens-owner.png"), fullPage: true });

  // The secret is not shown again: after a reload only the prefix is left.
  await page.reload();
  await expect(page.getByTestId("token-secret")).toHaveCount(0);
  await expect(page.getByText(secret)).toHaveCount(0);

  await row.getByRole("button", { name: "Revoke rink build agent" }).click();
  const revokeDialog = page.getByTestId("confirm-revoke-token");
  await expect(revokeDialog).toContainText("Revoke the token “rink build agent”?");
  await revokeDialog.getByRole("button", { name: "Revoke token" }).click();
  await expect(row).toContainText("revoked");
});

test("only platform admins open the admin lists", async ({ browser }) => {
  const adminContext = await browser.newContext();
  const admin = await adminContext.newPage();
  // The seeded platform operator (server/seed.ts).
  await signInWithPassword(admin, "ops@kickdrift.test", "kickdrift-operator");
  await admin.getByRole("link", { name: "Admin", exact: true }).click();
  await expect(admin.getByTestId("admin-studios")).toContainText(DEMO_OWNER.studio);
  await admin.getByRole("navigation", { name: "Admin sections" }).getByRole("link", { name: "Users" }).click();
  await expect(admin.getByTestId("admin-users")).toContainText(DEMO_OWNER.email);
  await adminContext.close();

  const ownerContext = await browser.newContext();
  const owner = await ownerContext.newPage();
  await signInWithPassword(owner, DEMO_OWNER.email, DEMO_OWNER.password);
  await expect(owner.getByRole("link", { name: "Admin", exact: true })).toHaveCount(0);
  const adminPage = await owner.goto("/admin");
  expect(adminPage?.status()).toBe(403);
  await expect(owner.getByTestId("forbidden")).toBeVisible();
  await expect(owner.getByTestId("admin-users")).toHaveCount(0);
  await ownerContext.close();
});
