/**
 * Issue 18, the parts that need no database: one redirect check, the body scan without recursion,
 * the client address behind trusted proxies, own-property lookups of user-named groups and
 * headers, and malformed percent-escapes answered 404 before routing.
 */
import { createServer, request as httpRequest } from "node:http";
import type { AddressInfo } from "node:net";
import { NextRequest } from "next/server";
import { beforeAll, describe, expect, it } from "vitest";
import { checkJsonValue, MAX_JSON_DEPTH } from "@/lib/api/body";
import { addressRange, clientAddress, PEER_HEADER } from "@/lib/auth/limiter";
import { authOptions } from "@/lib/auth/options";
import { cataloguePairs, checkSettingsSchema, CheckInputError } from "@/lib/catalogues/check";
import { CRATESLIDE_SETTINGS } from "@/lib/catalogues/demo";
import { columnOfHeader, parseCatalogueFile, type CatalogueObject } from "@/lib/catalogues/format";
import { installPeerAddressStamp } from "@/lib/ops/peer-address";
import { safeCallbackUrl } from "@/lib/ui/callback-url";
import { proxy } from "@/proxy";
import { ApiError } from "@/lib/errors";

const BASE = "http://localhost:3000";
beforeAll(() => {
  process.env.NEXTAUTH_URL = BASE;
});

describe("1. redirect targets stay on the site after the browser's own normalisation", () => {
  // Each value is what a browser would turn into another origin (WHATWG URL Standard, "basic URL
  // parser": ASCII tab and newline are removed, "\" is read as "/" in special schemes).
  const offSite = [
    "/\t/evil.example/",
    "/\n/evil.example/",
    "/\r\n/evil.example",
    "\t//evil.example",
    "//evil.example",
    "/\\evil.example",
    "\\\\evil.example",
    "\\/evil.example",
    " //evil.example",
    "https://evil.example/studios",
    "javascript:alert(1)",
    "/.//evil.example",
    "http://localhost:3001/studios",
  ];
  it.each(offSite)("refuses %j (falls back to /studios)", (raw) => {
    const safe = safeCallbackUrl(raw);
    expect(safe).toBe("/studios");
  });

  it("keeps same-origin paths, re-serialised without control characters", () => {
    expect(safeCallbackUrl("/studios/std_1/sweeps?tab=map#cell-3")).toBe("/studios/std_1/sweeps?tab=map#cell-3");
    expect(safeCallbackUrl(`${BASE}/studios/std_1`)).toBe("/studios/std_1");
    expect(safeCallbackUrl("/stu\tdios")).toBe("/studios");
    expect(safeCallbackUrl("/%0A/x")).toBe("/%0A/x");
    for (const path of ["/studios/a\tb", "/a\nb"]) expect(safeCallbackUrl(path)).not.toMatch(/[\t\n\r]/);
  });

  it("next-auth's redirect callback uses the same check", async () => {
    const redirect = authOptions.callbacks!.redirect!;
    expect(await redirect({ url: "/\t/evil.example/", baseUrl: BASE })).toBe(`${BASE}/studios`);
    expect(await redirect({ url: `${BASE}/studios/std_9`, baseUrl: BASE })).toBe(`${BASE}/studios/std_9`);
    expect(await redirect({ url: "https://evil.example/", baseUrl: BASE })).toBe(`${BASE}/studios`);
  });
});

describe("3. the body scan has no recursion and a depth limit", () => {
  it("refuses 8,000 nested arrays with 400 payload_too_deep naming the limit (no stack overflow, no 500)", () => {
    const deep = JSON.parse(`${"[".repeat(8000)}${"]".repeat(8000)}`);
    let error: unknown;
    try {
      checkJsonValue(deep);
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(ApiError);
    expect(error).toMatchObject({ status: 400, code: "payload_too_deep" });
    expect((error as ApiError).message).toContain(`${MAX_JSON_DEPTH} levels`);
  });

  it("accepts nesting up to the limit and still finds NUL and lone surrogates deep inside, naming the path", () => {
    let ok: unknown = "x";
    for (let i = 0; i < MAX_JSON_DEPTH; i++) ok = [ok];
    expect(() => checkJsonValue(ok)).not.toThrow();
    expect(() => checkJsonValue({ a: [{ b: "x\u0000" }] })).toThrow(expect.objectContaining({ status: 400, field: "a.0.b" }));
    expect(() => checkJsonValue({ a: { name: "bad \ud800 half" } })).toThrow(expect.objectContaining({ status: 422, code: "invalid_text", field: "a.name" }));
    expect(() => checkJsonValue({ ok: "pair \ud83d\ude80 fine" })).not.toThrow();
  });
});

describe("4. the client address comes from trusted proxy hops only", () => {
  const headers = (xff: string | undefined, peer: string | undefined) => {
    const h = new Headers();
    if (xff) h.set("x-forwarded-for", xff);
    if (peer) h.set(PEER_HEADER, peer);
    return h;
  };

  it("with no trusted proxy (the default) the TCP peer is the client, whatever X-Forwarded-For claims", () => {
    installPeerAddressStamp();
    expect(clientAddress(headers("203.0.113.50", "198.51.100.9"), 0)).toBe("198.51.100.9");
    expect(clientAddress(headers("1.2.3.4, 203.0.113.50", "198.51.100.9"), 0)).toBe("198.51.100.9");
    expect(clientAddress(headers(undefined, "::ffff:198.51.100.9"), 0)).toBe("198.51.100.9");
  });

  it("with N trusted hops it takes the N-th address from the right; the client's own claims left of it are ignored", () => {
    installPeerAddressStamp();
    // Proxy (peer 10.0.0.2) appended the address it saw (203.0.113.50); "1.2.3.4" was sent by the client.
    expect(clientAddress(headers("1.2.3.4, 203.0.113.50", "10.0.0.2"), 1)).toBe("203.0.113.50");
    expect(clientAddress(headers("1.2.3.4, 203.0.113.50, 10.0.0.1", "10.0.0.2"), 2)).toBe("203.0.113.50");
  });

  it("the stamp is the socket's address on a real HTTP server, overwriting a forged copy of the header", async () => {
    installPeerAddressStamp();
    const server = createServer((req, res) => res.end(clientAddress(req.headers, 0)));
    await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
    const port = (server.address() as AddressInfo).port;
    const seen = await new Promise<string>((resolve, reject) => {
      const req = httpRequest({ host: "127.0.0.1", port, path: "/", headers: { "x-forwarded-for": "203.0.113.99", [PEER_HEADER]: "203.0.113.98" } }, (res) => {
        let text = "";
        res.on("data", (c: Buffer) => (text += c.toString()));
        res.on("end", () => resolve(text));
      });
      req.on("error", reject);
      req.end();
    });
    await new Promise<void>((resolve) => server.close(() => resolve()));
    expect(seen).toBe("127.0.0.1");
  });

  it("groups addresses into ranges: IPv4 /24, IPv6 /64", () => {
    expect(addressRange("203.0.113.77")).toBe("203.0.113.0/24");
    expect(addressRange("2001:db8:1:2:3:4:5:6")).toBe("2001:db8:1:2::/64");
    expect(addressRange("2001:db8::1")).toBe("2001:db8:0:0::/64");
  });
});

describe("10. user-named groups and headers are read as own properties", () => {
  const csv = (groups: string[]) =>
    new TextEncoder().encode(
      ["name,mass_kg,radius_m,top_speed_m_per_s,restitution,group", ...groups.map((g, i) => `thing${i},1,0.1,2,0.5,${g}`)].join("\n"),
    );

  it("checks a catalogue whose groups are named constructor, toString and hasOwnProperty", () => {
    const parsed = parseCatalogueFile(csv(["constructor", "toString", "hasOwnProperty"]), "groups.csv");
    expect(parsed.problems ?? []).toEqual([]);
    const objects = parsed.objects as CatalogueObject[];
    const settings = checkSettingsSchema.parse({ ...CRATESLIDE_SETTINGS, stiffness: undefined, groupStiffness: { constructor: 1000, toString: 2000, hasOwnProperty: 4000 } });
    const pairs = cataloguePairs(objects, settings);
    expect(pairs).toHaveLength(6);
    // A group meeting itself keeps its own stiffness (harmonic mean of equal values).
    expect(pairs[0].stiffness).toBe(1000);
    expect(pairs.every((p) => typeof p.stiffness === "number" && Number.isFinite(p.stiffness))).toBe(true);
  });

  it("names the missing group instead of reading Object.prototype (no 'got a function')", () => {
    const objects = parseCatalogueFile(csv(["valueOf"]), "groups.csv").objects as CatalogueObject[];
    const settings = checkSettingsSchema.parse({ ...CRATESLIDE_SETTINGS, stiffness: undefined, groupStiffness: { crate: 1000 } });
    expect(() => cataloguePairs(objects, settings)).toThrow(CheckInputError);
    expect(() => cataloguePairs(objects, settings)).toThrow(/no stiffness for group "valueOf"/);
  });

  it("refuses __proto__ as a group name with a message, and does not take 'constructor' for a column", () => {
    const parsed = parseCatalogueFile(csv(["__proto__"]), "groups.csv");
    expect(JSON.stringify(parsed.problems)).toContain("reserved");
    expect(columnOfHeader("constructor")).toBeNull();
    expect(columnOfHeader("__proto__")).toBeNull();
  });

  it("refuses a right-to-left override in an object name", () => {
    const parsed = parseCatalogueFile(new TextEncoder().encode("name,mass_kg,radius_m,top_speed_m_per_s,restitution\ncrate\u202Etxt.exe,1,0.1,2,0.5\n"), "bidi.csv");
    expect(JSON.stringify(parsed.problems)).toContain("U+202E");
  });
});

describe("11. malformed percent-escapes in a path answer 404 before routing", () => {
  it.each(["/api/v1/studios/%ZZ/sweeps", "/api/v1/studios/%E0%A4%A/sweeps", "/api/v1/invites/%"])("%s → 404 JSON not_found", async (path) => {
    const res = proxy(new NextRequest(new URL(path, BASE)));
    expect(res.status).toBe(404);
    expect(await res.json()).toMatchObject({ error: { code: "not_found" } });
  });
  it("leaves well-formed paths to the router (and forbids framing them)", () => {
    for (const path of ["/api/v1/studios/std_%41/sweeps", "/studios/caf%C3%A9", "/signin"]) {
      const res = proxy(new NextRequest(new URL(path, BASE)));
      expect(res.headers.get("x-middleware-next")).toBe("1");
      expect(res.headers.get("x-frame-options")).toBe("DENY");
    }
    expect(proxy(new NextRequest(new URL("/studios/%ZZ", BASE))).status).toBe(404);
  });
});
