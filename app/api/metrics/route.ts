import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { withAuth } from "@/lib/auth/guard";
import { prometheusResponse } from "@/lib/ops/prometheus";
import { queueMetrics } from "@/lib/ops/queue-metrics";
import { PUBLIC } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Queue depth, running chunks and completed work of the whole installation, in the Prometheus text
// format. Public for scrapers; aggregates only (no studio, sweep or person is named).
export const GET = withAuth(PUBLIC, async () => prometheusResponse(await queueMetrics(await getDb())));

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
