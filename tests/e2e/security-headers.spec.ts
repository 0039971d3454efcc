import { expect, test } from "./helpers";

const DEMO_OWNER = { email: "maren@gannetyard.test", password: "crateslide-owner" };

function expectSecurityHeaders(headers: Record<string, string>, label: string, kind: "page" | "api"): void {
  const csp = headers["content-security-policy"] ?? "";
  expect(csp, label).toContain("frame-ancestors 'none'");
  if (kind === "page") {
    expect(csp, label).toMatch(/script-src 'self' 'nonce-[A-Za-z0-9+/=]{20,}' 'strict-dynamic'/);
    expect(csp, label).not.toContain("unsafe-eval");
  } else {
    expect(csp, label).toContain("default-src 'none'");
  }
  expect(headers["x-frame-options"], label).toBe("DENY");
  expect(headers["x-content-type-options"], label).toBe("nosniff");
  expect(headers["referrer-policy"], label).toBe("strict-origin-when-cross-origin");
  // Plain http on localhost: no HSTS (it would pin a browser to https this server does not speak).
  expect(headers["strict-transport-security"], label).toBeUndefined();
}

test("pages, API answers and error pages carry the security headers, each page a fresh nonce", async ({ request }) => {
  const pages = [
    ["/", 200],
    ["/signin", 200],
    ["/signup", 200],
    ["/reset", 200],
    ["/no-such-page", 404],
  ] as const;
  const nonces = new Set<string>();
  for (const [path, status] of pages) {
    const res = await request.get(path);
    expect(res.status(), path).toBe(status);
    expectSecurityHeaders(res.headers(), path, "page");
    nonces.add(/'nonce-([^']+)'/.exec(res.headers()["content-security-policy"])![1]);
    // Next put the nonce on its own scripts: every <script> of the page carries it.
    const html = await res.text();
    const nonce = /'nonce-([^']+)'/.exec(res.headers()["content-security-policy"])![1];
    const scripts = [...html.matchAll(/<script\b[^>]*>/g)].map((m) => m[0]);
    expect(scripts.length, path).toBeGreaterThan(0);
    for (const tag of scripts) expect(tag, `${path}: ${tag}`).toContain(`nonce="${nonce}"`);
  }
  expect(nonces.size).toBe(pages.length);

  const api = [
    ["/api/v1/me", 401],
    ["/api/v1/no-such-route", 404],
    ["/api/health", 200],
  ] as const;
  for (const [path, status] of api) {
    const res = await request.get(path);
    expect(res.status(), path).toBe(status);
    expectSecurityHeaders(res.headers(), path, "api");
  }
  // A 405 and a malformed body answer with them too.
  const post = await request.post("/api/v1/signup", { data: "{not json", headers: { "content-type": "application/json" } });
  expect(post.status()).toBe(400);
  expectSecurityHeaders(post.headers(), "POST /api/v1/signup (bad JSON)", "api");
});

test("behind a TLS proxy (x-forwarded-proto: https) responses carry HSTS", async ({ request }) => {
  for (const path of ["/", "/api/health"]) {
    const res = await request.get(path, { headers: { "x-forwarded-proto": "https" } });
    expect(res.headers()["strict-transport-security"], path).toBe("max-age=63072000; includeSubDomains");
  }
});

test("the session cookie is HttpOnly and SameSite=Lax; the signed-in pages render under the CSP", async ({ page, context }) => {
  await page.goto("/signin");
  await page.getByLabel("E-mail", { exact: true }).fill(DEMO_OWNER.email);
  await page.getByLabel("Password", { exact: true }).fill(DEMO_OWNER.password);
  await page.getByRole("button", { name: "Sign in", exact: true }).click();
  await expect(page).toHaveURL(/\/studios$/);
  const session = (await context.cookies()).find((c) => c.name.endsWith("next-auth.session-token"));
  expect(session?.httpOnly).toBe(true);
  expect(session?.sameSite).toBe("Lax");
  // The studio's pages (charts, forms, tables) render with the CSP on; the fixture fails on any violation.
  await page.getByRole("link", { name: /Gannet Yard Games/ }).first().click();
  await expect(page.getByTestId("studio-name")).toBeVisible();
});
