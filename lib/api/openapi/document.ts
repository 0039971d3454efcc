/**
 * The OpenAPI 3.1 document of the public API, generated (zod-openapi) from the registry in
 * ./operations.ts, which holds the same zod schemas and policies the route handlers use.
 */
import "server-only";
import { z } from "@/lib/zod";
import { createDocument, type ZodOpenApiOperationObject, type ZodOpenApiPathsObject, type ZodOpenApiResponsesObject } from "zod-openapi";
import { MAX_JSON_BODY_BYTES } from "@/lib/api/body";
import type { RoutePolicy } from "@/lib/auth/guard";
import { OPERATIONS, type Operation } from "./operations";

/** The error body every 4xx and 5xx answer carries (lib/api/respond.ts). */
export const errorBodySchema = z
  .object({
    error: z.object({
      code: z.string().describe("A stable machine-readable code, e.g. validation_failed, not_found, insufficient_minutes."),
      message: z.string().describe("What went wrong, naming the field and the limit where there is one."),
      field: z.string().optional().describe('The dotted path of the field at fault ("body" for the body as a whole).'),
      issues: z.array(z.object({ field: z.string(), message: z.string() })).optional().describe("Every problem found, when there are several."),
      limit: z
        .object({ name: z.string(), value: z.number(), requested: z.number(), remaining: z.number(), unit: z.string() })
        .optional()
        .describe("The quota a request ran into."),
    }),
  })
  .meta({ id: "Error" });

/** Success body of an operation without a field-level schema (tests/integration/openapi.test.ts allows none but the file downloads). */
const objectBody = z.looseObject({}).meta({ id: "Object" });

const uploadSchema = z.object({
  file: z.string().meta({ format: "binary" }).describe("The file (CSV or JSON for catalogues, JSON for snapshots)."),
  name: z.string().max(200).optional().describe("The name the upload is stored under (its next version)."),
});

function security(policy: RoutePolicy): Record<string, string[]>[] | undefined {
  if (policy.access === "public") return [];
  if (policy.access === "studio" && policy.token !== "never") {
    const scopes = policy.token === "read" ? ["read"] : ["write"];
    return [{ apiToken: scopes }, { session: [] }];
  }
  return [{ session: [] }];
}

function pathParams(path: string): z.ZodObject | undefined {
  const names = [...path.matchAll(/\{([^}]+)\}/g)].map((m) => m[1]);
  if (names.length === 0) return undefined;
  return z.object(Object.fromEntries(names.map((name) => [name, z.string().min(1).max(200)])));
}

function successContent(op: Operation) {
  switch (op.produces ?? "json") {
    case "json":
      return { "application/json": { schema: op.response ?? objectBody } };
    case "json-or-csv":
      return { "application/json": { schema: op.response ?? objectBody }, "text/csv": { schema: z.string() } };
    case "csv":
      return { "text/csv": { schema: z.string() } };
    case "file":
      // The uploaded file exactly as it was uploaded: the user's content, not a shape of ours.
      return { "application/json": { schema: z.unknown() }, "text/csv": { schema: z.string() }, "application/octet-stream": { schema: z.string() } };
  }
}

function operation(op: Operation): ZodOpenApiOperationObject {
  const error = { description: "An error naming the field and limit where there is one.", content: { "application/json": { schema: errorBodySchema } } };
  const responses: ZodOpenApiResponsesObject = {
    [String(op.ok)]: { description: op.summary, content: successContent(op) },
    ...Object.fromEntries((op.alsoOk ?? []).map((status) => [String(status), { description: op.summary, content: successContent(op) }])),
    "4XX": error,
    "5XX": { description: "The service or a provider it needs is unavailable (never for bad input).", content: { "application/json": { schema: errorBodySchema } } },
  };
  const result: ZodOpenApiOperationObject = {
    operationId: `${op.method}${op.path.replace(/^\/api\/v1/, "").replace(/\{([^}]+)\}/g, "By-$1").replace(/[^A-Za-z0-9]+(.)?/g, (_, c: string | undefined) => (c ? c.toUpperCase() : ""))}`,
    summary: op.summary,
    tags: [op.tag],
    security: security(op.policy),
    responses,
  };
  const path = pathParams(op.path);
  if (path || op.query) result.requestParams = { ...(path ? { path } : {}), ...(op.query ? { query: op.query } : {}) };
  if (op.internal) result.description = "Called by Stripe with a signed body; clients never call it.";
  if (op.body) result.requestBody = { required: true, content: { "application/json": { schema: op.body } } };
  if (op.upload) result.requestBody = { required: true, content: { "multipart/form-data": { schema: uploadSchema } } };
  return result;
}

export function buildOpenApiDocument(serverUrl?: string): ReturnType<typeof createDocument> {
  const paths: ZodOpenApiPathsObject = {};
  for (const op of OPERATIONS) {
    paths[op.path] ??= {};
    paths[op.path][op.method] = operation(op);
  }
  return createDocument({
    openapi: "3.1.0",
    info: {
      title: "Kickdrift API",
      version: "1",
      description: `Sweeps of game-physics collision parameters. JSON bodies are at most ${MAX_JSON_BODY_BYTES} bytes. Every error is { error: { code, message, field? } }. Results are numerical estimates for tuning game physics, not a basis for safety-critical engineering. Walk-throughs with curl: docs/api.md.`,
      license: { name: "Proprietary", identifier: "LicenseRef-Kickdrift" },
    },
    // Relative by default: the server that serves the document (a deployment's own address).
    servers: [{ url: serverUrl ?? "/", description: "This Kickdrift server" }],
    tags: [...new Set(OPERATIONS.map((op) => op.tag))].map((name) => ({ name, description: `${name} routes` })),
    components: {
      securitySchemes: {
        apiToken: { type: "http", scheme: "bearer", description: "A studio's API token (kd_…), scope read or write." },
        session: { type: "apiKey", in: "cookie", name: "next-auth.session-token", description: "The browser session after sign-in (__Secure-next-auth.session-token over https)." },
      },
    },
    paths,
  });
}
