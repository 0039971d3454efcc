/**
 * Issue 18 in a real browser: a page served from another origin (a second local port, which a
 * browser counts as the same site, so the session cookie goes along) tries to write with the
 * signed-in user's cookie and to frame the sign-in page; both are refused. The redirect probe
 * with a tab in callbackUrl stays on the site.
 */
import { createServer, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import { expect, test } from "@playwright/test";
import { signInWithPassword } from "./helpers";

const DEMO_OWNER = { email: "maren@gannetyard.test", password: "crateslide-owner" };

let attacker: Server;
let attackerOrigin: string;

test.beforeAll(async ({ baseURL }) => {
  const app = baseURL!;
  const studioName = "Cross Origin Studio";
  const page = `<!doctype html><html><body>
<h1>elsewhere</h1>
<iframe id="framed" src="${app}/signin" width="600" height="400"></iframe>
<form id="form" method="POST" action="${app}/api/v1/studios" enctype="text/plain">
  <input name='{"name":"${studioName}","x":"' value='"}'>
</form>
<script>
  window.results = {};
  fetch("${app}/api/v1/studios", { method: "POST", mode: "no-cors", credentials: "include", headers: { "content-type": "text/plain" }, body: JSON.stringify({ name: "${studioName}" }) })
    .then(() => (window.results.noCors = "sent"), (e) => (window.results.noCors = String(e)));
  fetch("${app}/api/v1/studios", { method: "POST", credentials: "include", headers: { "content-type": "application/json" }, body: JSON.stringify({ name: "${studioName}" }) })
    .then((r) => (window.results.cors = r.status), (e) => (window.results.cors = "blocked"));
</script>
</body></html>`;
  attacker = createServer((_req, res) => {
    res.writeHead(200, { "content-type": "text/html; charset=utf-8" });
    res.end(page);
  });
  await new Promise<void>((resolve) => attacker.listen(0, "localhost", resolve));
  attackerOrigin = `http://localhost:${(attacker.address() as AddressInfo).port}`;
});

test.afterAll(async () => {
  await new Promise<void>((resolve) => attacker.close(() => resolve()));
});

test("a page on another port can neither write with the user's cookie nor frame the sign-in", async ({ page, baseURL }) => {
  await signInWithPassword(page, DEMO_OWNER.email, DEMO_OWNER.password);
  const before = (await (await page.request.get(`${baseURL}/api/v1/studios`)).json()) as { studios: { name: string }[] };

  await page.goto(attackerOrigin);
  await expect.poll(() => page.evaluate(() => (window as unknown as { results: Record<string, unknown> }).results.noCors)).toBe("sent");
  await expect.poll(() => page.evaluate(() => (window as unknown as { results: Record<string, unknown> }).results.cors)).toBeDefined();

  // The sign-in page did not render inside the other origin's frame (X-Frame-Options: DENY).
  const framed = page.frameLocator("#framed");
  await expect(framed.getByLabel("Password", { exact: true })).toHaveCount(0);

  // A plain form post (text/plain, top-level, cookie attached): the API's refusal, not a studio.
  await Promise.all([page.waitForURL(`${baseURL}/api/v1/studios`), page.evaluate(() => (document.getElementById("form") as HTMLFormElement).submit())]);
  await expect(page.locator("body")).toContainText("cross_origin");

  const after = (await (await page.request.get(`${baseURL}/api/v1/studios`)).json()) as { studios: { name: string }[] };
  expect(after.studios.filter((s) => s.name === "Cross Origin Studio")).toHaveLength(0);
  expect(after.studios.length).toBe(before.studios.length);
});

test("the redirect probe stays on the site, signed in or not", async ({ page, baseURL }) => {
  const origin = new URL(baseURL!).origin;
  await page.goto("/signin?callbackUrl=/%09/evil.example/");
  expect(new URL(page.url()).origin).toBe(origin);
  await signInWithPassword(page, DEMO_OWNER.email, DEMO_OWNER.password);
  for (const probe of ["/%09/evil.example/", "/%0A/evil.example/", "/%5Cevil.example", "%09//evil.example"]) {
    const res = await page.goto(`/signin?callbackUrl=${probe}`);
    expect(res?.status()).toBeLessThan(500);
    expect(new URL(page.url()).origin).toBe(origin);
  }
});
