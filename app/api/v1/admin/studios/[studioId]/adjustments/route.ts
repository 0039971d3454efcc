import { getDb } from "@/db/client";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { pokeProcessRunner } from "@/lib/queue/poke";
import { adjustCredit, adjustmentSchema, adminStudioDetail, listAdjustments } from "@/lib/quotas/admin";
import { PLATFORM_ADMIN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth<typeof PLATFORM_ADMIN, { studioId: string }>(PLATFORM_ADMIN, async ({ params }) => {
  const db = await getDb();
  await adminStudioDetail(db, params.studioId); // 404 for an unknown studio
  return json({ adjustments: await listAdjustments(db, params.studioId) });
});

// Grant (positive computeMs) or revoke (negative) with a reason; 201 when written, 200 when a retry found it.
export const POST = withAuth<typeof PLATFORM_ADMIN, { studioId: string }>(PLATFORM_ADMIN, async ({ req, params, user }) => {
  const input = await parseBody(req, adjustmentSchema);
  const result = await adjustCredit(await getDb(), user, params.studioId, input);
  pokeProcessRunner();
  return json({ adjustment: result.adjustment, balanceMs: result.balanceMs }, result.created ? 201 : 200);
});

export const { PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET", "POST"]);
