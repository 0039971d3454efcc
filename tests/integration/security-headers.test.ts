/**
 * The security headers, from the one place that sets them (proxy.ts + lib/security/headers.ts), and the
 * session cookie's attributes as next-auth sets them: HttpOnly and SameSite=Lax always, Secure (and the
 * __Secure- name) when the public address is https.
 */
import { NextRequest } from "next/server";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { proxy } from "@/proxy";
import { contentSecurityPolicy } from "@/lib/security/headers";
import { closeTestDb, useFreshDb } from "../helpers/db";
import { makeUser } from "../helpers/factories";
import { csrf, nextAuth } from "../helpers/next-auth";

describe("proxy.ts", () => {
  it("gives a page a fresh nonce in its CSP and hands the same nonce to the render", () => {
    const first = proxy(new NextRequest("http://localhost:3000/studios"));
    const second = proxy(new NextRequest("http://localhost:3000/studios"));
    const csp = first.headers.get("content-security-policy")!;
    const nonce = /'nonce-([^']+)'/.exec(csp)![1];
    expect(nonce).not.toBe(/'nonce-([^']+)'/.exec(second.headers.get("content-security-policy")!)![1]);
    // Next reads the request's CSP (and the layout x-nonce) when it renders: the override headers carry both.
    expect(first.headers.get("x-middleware-request-x-nonce")).toBe(nonce);
    expect(first.headers.get("x-middleware-request-content-security-policy")).toBe(csp);
    expect(csp).toContain("frame-ancestors 'none'");
    expect(csp).not.toContain("unsafe-eval");
    expect(csp).not.toMatch(/script-src[^;]*'unsafe-inline'/);
    expect(first.headers.get("x-frame-options")).toBe("DENY");
    expect(first.headers.get("x-content-type-options")).toBe("nosniff");
    expect(first.headers.get("referrer-policy")).toBe("strict-origin-when-cross-origin");
    expect(first.headers.get("strict-transport-security")).toBeNull();
  });

  it("gives API answers a CSP that allows nothing to run or load", () => {
    const res = proxy(new NextRequest("http://localhost:3000/api/v1/me"));
    expect(res.headers.get("content-security-policy")).toBe("default-src 'none'; frame-ancestors 'none'; base-uri 'none'; form-action 'none'");
    expect(res.headers.get("x-content-type-options")).toBe("nosniff");
    expect(res.headers.get("x-middleware-request-x-nonce")).toBeNull();
  });

  it("adds HSTS and upgrade-insecure-requests over HTTPS: the request's scheme, the proxy's x-forwarded-proto, or an https NEXTAUTH_URL", () => {
    const direct = proxy(new NextRequest("https://kickdrift.example.test/"));
    const forwarded = proxy(new NextRequest("http://10.0.0.5:3000/", { headers: { "x-forwarded-proto": "https" } }));
    vi.stubEnv("NEXTAUTH_URL", "https://kickdrift.example.test");
    let configured;
    try {
      configured = proxy(new NextRequest("http://10.0.0.5:3000/api/health"));
    } finally {
      vi.unstubAllEnvs();
    }
    for (const res of [direct, forwarded, configured]) expect(res.headers.get("strict-transport-security")).toBe("max-age=63072000; includeSubDomains");
    expect(direct.headers.get("content-security-policy")).toContain("upgrade-insecure-requests");
  });

  it("allows eval only under next dev (React's debugging stacks), never in production", () => {
    expect(contentSecurityPolicy({ nonce: "n", https: false, development: true, api: false })).toContain("'unsafe-eval'");
    vi.stubEnv("NODE_ENV", "production");
    try {
      expect(proxy(new NextRequest("http://localhost:3000/")).headers.get("content-security-policy")).not.toContain("unsafe-eval");
    } finally {
      vi.unstubAllEnvs();
    }
  });
});

describe("the session cookie", () => {
  let email: string;
  beforeAll(async () => {
    await useFreshDb();
    email = (await makeUser({ password: "cookie-jar-password" })).email;
  });
  afterAll(closeTestDb);

  async function sessionSetCookie(): Promise<string> {
    const { csrfToken, cookie } = await csrf();
    const res = await nextAuth(["callback", "credentials"], {
      method: "POST",
      form: { csrfToken, email, password: "cookie-jar-password", json: "true", callbackUrl: "/studios" },
      cookie,
      headers: { "x-forwarded-for": "198.51.100.40" },
    });
    const line = res.headers.getSetCookie().find((c) => /next-auth\.session-token=/.test(c));
    expect(line, "a session cookie was set").toBeTruthy();
    return line!;
  }

  it("is HttpOnly and SameSite=Lax over http, without Secure", async () => {
    const line = await sessionSetCookie();
    expect(line).toMatch(/;\s*HttpOnly/i);
    expect(line).toMatch(/;\s*SameSite=Lax/i);
    expect(line).not.toMatch(/;\s*Secure/i);
  });

  it("is also Secure (and named __Secure-…) when the public address is https", async () => {
    vi.stubEnv("NEXTAUTH_URL", "https://kickdrift.example.test");
    try {
      const line = await sessionSetCookie();
      expect(line).toMatch(/^__Secure-next-auth\.session-token=/);
      expect(line).toMatch(/;\s*Secure/i);
      expect(line).toMatch(/;\s*HttpOnly/i);
      expect(line).toMatch(/;\s*SameSite=Lax/i);
    } finally {
      vi.unstubAllEnvs();
    }
  });
});
