/**
 * Webhook signatures: the receiver recipe printed in docs/api.md, run as written, accepts what
 * Kickdrift signs, and refuses a changed body, a wrong secret, an old timestamp and a replay; the
 * Standard Webhooks library (npm standardwebhooks, the independent reference) agrees.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { Webhook } from "standardwebhooks";
import { afterAll, describe, expect, it } from "vitest";
import { newWebhookSecret, webhookHeaders } from "@/lib/webhooks/signature";

const doc = readFileSync(path.join(process.cwd(), "docs", "api.md"), "utf8");
const recipe = /## Webhooks[\s\S]*?```js\n([\s\S]*?)```/.exec(doc)?.[1] ?? "";
const dir = mkdtempSync(path.join(tmpdir(), "kd-recipe-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function docVerify(): Promise<(secret: string, headers: Record<string, string>, body: string, seen: Set<string>) => unknown> {
  const file = path.join(dir, "recipe.mjs");
  writeFileSync(file, `${recipe}\nexport { verify };\n`);
  return ((await import(/* @vite-ignore */ pathToFileURL(file).href)) as { verify: never }).verify;
}

describe("the documented receiver recipe", () => {
  it("accepts a signed delivery once, then reports the replay; refuses tampering, a wrong secret and an old timestamp", async () => {
    expect(recipe).toContain("timingSafeEqual");
    const verify = await docVerify();
    const secret = newWebhookSecret();
    const body = JSON.stringify({ id: "evt_crateslide1", type: "sweep.finished", data: { sweep: { id: "swp_x", status: "done" } } });
    const nowS = Math.floor(Date.now() / 1000);
    const headers = webhookHeaders(secret, "evt_crateslide1", nowS, body);
    const seen = new Set<string>();
    expect(verify(secret, headers, body, seen)).toEqual(JSON.parse(body));
    expect(verify(secret, headers, body, seen)).toBeNull(); // the replay
    expect(() => verify(secret, headers, body.replace("done", "dome"), new Set())).toThrow(/bad signature/);
    expect(() => verify(newWebhookSecret(), headers, body, new Set())).toThrow(/bad signature/);
    const old = webhookHeaders(secret, "evt_crateslide1", nowS - 301, body);
    expect(() => verify(secret, old, body, new Set())).toThrow(/too old/);
    // The independent reference library accepts the same headers.
    expect(new Webhook(secret).verify(body, headers)).toEqual(JSON.parse(body));
  });
});
