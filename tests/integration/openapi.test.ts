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

type JsonSchema = { $ref?: string; additionalProperties?: unknown; anyOf?: JsonSchema[]; oneOf?: JsonSchema[]; properties?: Record<string, unknown> };
type Doc = {
  paths: Record<string, Record<string, { responses: Record<string, { content?: Record<string, { schema: JsonSchema }> }> }>>;
  components: { schemas: Record<string, JsonSchema> };
};

/** Every branch of a success schema is an object with its fields listed and no others allowed. */
function strictBranches(schema: JsonSchema, doc: Doc): boolean {
  const resolved = schema.$ref ? doc.components.schemas[schema.$ref.replace("#/components/schemas/", "")] : schema;
  const branches = resolved.anyOf ?? resolved.oneOf;
  if (branches) return branches.every((branch) => strictBranches(branch, doc));
  return resolved.additionalProperties === false && resolved.properties !== undefined;
}

describe("success bodies described field by field", () => {
  it("every operation has a success schema of its own: strict objects, field by field (not just 'a JSON object')", () => {
    const doc = buildOpenApiDocument() as unknown as Doc;
    const generic: string[] = [];
    for (const op of OPERATIONS) {
      // The file downloads answer the file exactly as it was uploaded: the user's content, not a shape of ours.
      if (op.produces === "file") continue;
      const key = `${op.method.toUpperCase()} ${op.path}`;
      if (!op.response) {
        generic.push(`${key} (give it a response schema from lib/api/responses.ts)`);
        continue;
      }
      const json = doc.paths[op.path][op.method].responses[String(op.ok)].content?.["application/json"];
      expect(json, key).toBeDefined();
      // The OpenAPI document's own shape is the standard's; every other answer is ours and strict.
      if (op.path === "/api/v1/openapi.json") continue;
      if (!strictBranches(json!.schema, doc)) generic.push(`${key} (not a strict object)`);
    }
    expect(generic).toEqual([]);
    expect(doc.components.schemas.Object).toBeUndefined();
  });

  it("match what the routes answer (and refuse a field the document does not list)", async () => {
    const { closeTestDb, useFreshDb } = await import("../helpers/db");
    const { makeStudio, makeToken, makeUser } = await import("../helpers/factories");
    const { sessionCookie } = await import("../helpers/http");
    const { loadRoute } = await import("../helpers/routes");
    await useFreshDb();
    try {
      const owner = await makeUser();
      const admin = await makeUser({ isAdmin: true });
      const engineer = await makeUser();
      const studioId = await makeStudio("Tidewater Kites", [
        { user: owner, role: "owner" },
        { user: engineer, role: "engineer" },
      ]);
      const cookie = await sessionCookie(owner);
      const adminCookie = await sessionCookie(admin);
      await makeToken(studioId, ["read"]);
      const S = "/api/v1/studios/{studioId}";
      const { puckPairSpec } = await import("../unit/sweeps/fixtures");
      const A = "/api/v1/admin/studios/{studioId}";
      const cases: { method: string; path: string; route: string; body?: unknown; admin?: boolean }[] = [
        { method: "GET", path: "/api/v1/me", route: "v1/me" },
        { method: "GET", path: "/api/v1/studios", route: "v1/studios" },
        { method: "POST", path: "/api/v1/studios", route: "v1/studios", body: { name: "Second Kites" } },
        { method: "GET", path: S, route: "v1/studios/[studioId]" },
        { method: "GET", path: `${S}/members`, route: "v1/studios/[studioId]/members" },
        { method: "GET", path: `${S}/tokens`, route: "v1/studios/[studioId]/tokens" },
        { method: "POST", path: `${S}/tokens`, route: "v1/studios/[studioId]/tokens", body: { name: "nightly import", scopes: ["read"] } },
        { method: "GET", path: `${S}/overview`, route: "v1/studios/[studioId]/overview" },
        { method: "GET", path: `${S}/invites`, route: "v1/studios/[studioId]/invites" },
        { method: "GET", path: `${S}/webhooks`, route: "v1/studios/[studioId]/webhooks" },
        { method: "POST", path: `${S}/quotes`, route: "v1/studios/[studioId]/quotes", body: { spec: puckPairSpec() } },
        { method: "GET", path: `${S}/sweeps`, route: "v1/studios/[studioId]/sweeps" },
        { method: "GET", path: `${S}/catalogues`, route: "v1/studios/[studioId]/catalogues" },
        { method: "GET", path: `${S}/snapshots`, route: "v1/studios/[studioId]/snapshots" },
        { method: "GET", path: `${S}/billing`, route: "v1/studios/[studioId]/billing" },
        { method: "GET", path: `${S}/billing/ledger`, route: "v1/studios/[studioId]/billing/ledger" },
        { method: "GET", path: `${S}/billing/usage`, route: "v1/studios/[studioId]/billing/usage" },
        { method: "GET", path: `${S}/billing/invoices`, route: "v1/studios/[studioId]/billing/invoices" },
        { method: "GET", path: "/api/v1/admin/studios", route: "v1/admin/studios", admin: true },
        { method: "GET", path: A, route: "v1/admin/studios/[studioId]", admin: true },
        { method: "GET", path: `${A}/quotas`, route: "v1/admin/studios/[studioId]/quotas", admin: true },
        { method: "POST", path: `${A}/adjustments`, route: "v1/admin/studios/[studioId]/adjustments", admin: true, body: { computeMs: 60_000, reason: "goodwill minute", idempotencyKey: "openapi-test-1" } },
        { method: "GET", path: `${A}/adjustments`, route: "v1/admin/studios/[studioId]/adjustments", admin: true },
        { method: "GET", path: "/api/v1/admin/users", route: "v1/admin/users", admin: true },
        { method: "GET", path: "/api/v1/admin/queue", route: "v1/admin/queue", admin: true },
        { method: "GET", path: "/api/v1/admin/finance", route: "v1/admin/finance", admin: true },
        { method: "GET", path: "/api/v1/admin/audit", route: "v1/admin/audit", admin: true },
      ];
      for (const c of cases) {
        const op = OPERATIONS.find((o) => o.path === c.path && o.method === c.method.toLowerCase());
        expect(op?.response, `${c.method} ${c.path} has a success schema`).toBeDefined();
        const handler = (await loadRoute(c.route))[c.method];
        const res = await call(handler, { method: c.method, path: c.path.replace("{studioId}", studioId), params: { studioId }, cookie: c.admin ? adminCookie : cookie, body: c.body });
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
