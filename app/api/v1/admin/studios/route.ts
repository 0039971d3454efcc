import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { adminStudioList } from "@/lib/quotas/admin";
import { PLATFORM_ADMIN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Every studio with this month's usage against its cap, balance, sweeps and status.
export const GET = withAuth(PLATFORM_ADMIN, async () => json({ studios: await adminStudioList(await getDb()) }));

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
