import { getDb } from "@/db/client";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { pokeProcessRunner } from "@/lib/queue/poke";
import { adminStudioDetail, quotaPatchSchema, studioQuotaView, updateQuotas } from "@/lib/quotas/admin";
import { PLATFORM_ADMIN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth<typeof PLATFORM_ADMIN, { studioId: string }>(PLATFORM_ADMIN, async ({ params }) => {
  const db = await getDb();
  await adminStudioDetail(db, params.studioId); // 404 for an unknown studio
  return json({ quotas: await studioQuotaView(db, params.studioId) });
});

// A partial edit; null returns a quota to the plan default. Audited with the values before and after.
export const PATCH = withAuth<typeof PLATFORM_ADMIN, { studioId: string }>(PLATFORM_ADMIN, async ({ req, params, user }) => {
  const patch = await parseBody(req, quotaPatchSchema);
  const quotas = await updateQuotas(await getDb(), user, params.studioId, patch);
  pokeProcessRunner(); // a raised cap resumes paused sweeps without waiting for the next poll
  return json({ quotas });
});

export const { POST, PUT, DELETE, OPTIONS } = otherMethods(["GET", "PATCH"]);
