/**
 * Writes the OpenAPI document (generated from the route schemas, lib/api/openapi) to a file, for the
 * linter and the proxied campaign: `npx tsx --import ./scripts/server-only-hook.mjs scripts/openapi.ts [out.json] [serverUrl]`.
 */
import { writeFileSync } from "node:fs";
import { buildOpenApiDocument } from "@/lib/api/openapi/document";

const out = process.argv[2] ?? ".build/openapi.json";
writeFileSync(out, `${JSON.stringify(buildOpenApiDocument(process.argv[3]), null, 2)}\n`);
console.log(`OpenAPI document written to ${out}`);
