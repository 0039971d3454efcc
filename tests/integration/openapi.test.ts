/**
 * The OpenAPI document holds every route under app/api/v1 with the route's own policy, and nothing
 * that is not a route; it is generated from the schemas the routes validate with.
 */
import { describe, expect, it } from "vitest";
import * as openapiRoute from "@/app/api/v1/openapi.json/route";
import { buildOpenApiDocument } from "@/lib/api/openapi/document";
import { OPERATIONS } from "@/lib/api/openapi/operations";
import { call } from "../helpers/http";
import { routePolicies } from "../helpers/routes";

/** "v1/studios/[studioId]/quotes" → "/api/v1/studios/{studioId}/quotes" */
const documentPath = (route: string) => `/api/${route.replace(/\[([^\]]+)\]/g, "{$1}")}`;

describe("the OpenAPI document", () => {
  it("lists every route method under app/api/v1, with the route's own access policy", async () => {
    const routes = (await routePolicies()).filter((r) => r.route.startsWith("v1/"));
    expect(routes.length).toBeGreaterThan(50);
    const missing: string[] = [];
    for (const { route, method, policy } of routes) {
      const op = OPERATIONS.find((o) => o.path === documentPath(route) && o.method === method.toLowerCase());
      if (!op) missing.push(`${method} ${documentPath(route)} (add it to lib/api/openapi/operations.ts)`);
      else expect(op.policy, `${method} ${route}`).toEqual(policy);
    }
    expect(missing).toEqual([]);
  });

  it("lists nothing that is not a route", async () => {
    const routes = new Set((await routePolicies()).map((r) => `${r.method.toLowerCase()} ${documentPath(r.route)}`));
    expect(OPERATIONS.map((o) => `${o.method} ${o.path}`).filter((key) => !routes.has(key))).toEqual([]);
  });

  it("is served at /api/v1/openapi.json as OpenAPI 3.1 with an operation per route method and the error shape", async () => {
    const res = await call(openapiRoute.GET, { path: "/api/v1/openapi.json" });
    expect(res.status).toBe(200);
    const doc = res.body as { openapi: string; paths: Record<string, Record<string, { responses: Record<string, unknown> }>>; components: { schemas: Record<string, unknown> } };
    expect(doc.openapi).toBe("3.1.0");
    const operations = Object.values(doc.paths).flatMap((item) => Object.values(item));
    expect(operations).toHaveLength(OPERATIONS.length);
    for (const op of operations) expect(Object.keys(op.responses)).toEqual(expect.arrayContaining(["4XX", "5XX"]));
    expect(doc.components.schemas.Error).toBeDefined();
  });

  it("takes its request schemas from the routes' zod schemas (the axis count's limits, the signup fields)", () => {
    const text = JSON.stringify(buildOpenApiDocument());
    const doc = buildOpenApiDocument() as unknown as { paths: Record<string, Record<string, { requestBody?: { content: Record<string, { schema: unknown }> } }>> };
    const signup = JSON.stringify(doc.paths["/api/v1/signup"].post.requestBody!.content["application/json"].schema);
    expect(signup).toContain('"email"');
    expect(signup).toContain('"additionalProperties":false');
    const quote = JSON.stringify(doc.paths["/api/v1/studios/{studioId}/quotes"].post.requestBody!.content["application/json"].schema);
    expect(quote.includes('"count"') || text.includes('"count":{"type":"integer","minimum":1')).toBe(true);
    expect(text).toMatch(/"count":\{[^}]*"minimum":1/);
  });
});

describe("success bodies described field by field", () => {
  it("match what the routes answer (and refuse a field the document does not list)", async () => {
    const { closeTestDb, useFreshDb } = await import("../helpers/db");
    const { makeStudio, makeToken, makeUser } = await import("../helpers/factories");
    const { sessionCookie } = await import("../helpers/http");
    const { loadRoute } = await import("../helpers/routes");
    await useFreshDb();
    try {
      const owner = await makeUser();
      const engineer = await makeUser();
      const studioId = await makeStudio("Tidewater Kites", [
        { user: owner, role: "owner" },
        { user: engineer, role: "engineer" },
      ]);
      const cookie = await sessionCookie(owner);
      await makeToken(studioId, ["read"]);
      const S = "/api/v1/studios/{studioId}";
      const cases: { method: string; path: string; route: string; body?: unknown; bearer?: boolean }[] = [
        { method: "GET", path: "/api/v1/me", route: "v1/me" },
        { method: "GET", path: "/api/v1/studios", route: "v1/studios" },
        { method: "POST", path: "/api/v1/studios", route: "v1/studios", body: { name: "Second Kites" } },
        { method: "GET", path: S, route: "v1/studios/[studioId]" },
        { method: "GET", path: `${S}/members`, route: "v1/studios/[studioId]/members" },
        { method: "GET", path: `${S}/tokens`, route: "v1/studios/[studioId]/tokens" },
        { method: "POST", path: `${S}/tokens`, route: "v1/studios/[studioId]/tokens", body: { name: "nightly import", scopes: ["read"] } },
      ];
      for (const c of cases) {
        const op = OPERATIONS.find((o) => o.path === c.path && o.method === c.method.toLowerCase());
        expect(op?.response, `${c.method} ${c.path} has a success schema`).toBeDefined();
        const handler = (await loadRoute(c.route))[c.method];
        const res = await call(handler, { method: c.method, path: c.path.replace("{studioId}", studioId), params: { studioId }, cookie, body: c.body });
        expect(res.status, `${c.method} ${c.path}`).toBe(op!.ok);
        const parsed = op!.response!.safeParse(res.body);
        expect(parsed.success, `${c.method} ${c.path}: ${parsed.error?.message}`).toBe(true);
        // Strict: an answer carrying a field the document does not describe is a contract violation.
        expect(op!.response!.safeParse({ ...(res.body as object), undocumented: 1 }).success).toBe(false);
      }
      const doc = buildOpenApiDocument() as unknown as { paths: Record<string, Record<string, { responses: Record<string, { content: Record<string, { schema: unknown }> }> }>> };
      const me = JSON.stringify(doc.paths["/api/v1/me"].get.responses["200"].content["application/json"].schema);
      expect(me).toContain('"additionalProperties":false');
      expect(JSON.stringify(doc)).toMatch(/"User":\{[^]*"isAdmin"/);
    } finally {
      await closeTestDb();
    }
  });
});
