import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { adminQueue } from "@/lib/quotas/admin";
import { PLATFORM_ADMIN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Every unfinished sweep of every studio: what runs, waits or is paused, for whom and why.
export const GET = withAuth(PLATFORM_ADMIN, async () => json({ sweeps: await adminQueue(await getDb()) }));

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
