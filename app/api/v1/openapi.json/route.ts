import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { buildOpenApiDocument } from "@/lib/api/openapi/document";
import { withAuth } from "@/lib/auth/guard";
import { PUBLIC } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// The OpenAPI 3.1 document, generated from the zod schemas the routes use (lib/api/openapi).
export const GET = withAuth(PUBLIC, async () => json(buildOpenApiDocument()));

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
