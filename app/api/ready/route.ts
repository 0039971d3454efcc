import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { withAuth } from "@/lib/auth/guard";
import { readinessResponse } from "@/lib/ops/endpoints";
import { PUBLIC } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Readiness: 200 once the database answers (migrated), 503 `not_ready` otherwise. Public, as
// orchestrators probe it without credentials; it names no studio.
export const GET = withAuth(PUBLIC, async () =>
  readinessResponse("app", getDb, { details: { runner: process.env.KICKDRIFT_RUNNER === "off" ? "off" : "in-process" } }),
);

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
