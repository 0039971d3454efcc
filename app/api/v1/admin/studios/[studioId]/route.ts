import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { adminStudioDetail } from "@/lib/quotas/admin";
import { PLATFORM_ADMIN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// One studio for its admin page: usage and standing, quotas (overrides, effective, defaults), members, adjustments.
export const GET = withAuth<typeof PLATFORM_ADMIN, { studioId: string }>(PLATFORM_ADMIN, async ({ params }) =>
  json(await adminStudioDetail(await getDb(), params.studioId)),
);

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
