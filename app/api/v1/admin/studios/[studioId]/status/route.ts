import { getDb } from "@/db/client";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { pokeProcessRunner } from "@/lib/queue/poke";
import { setStudioStatus, statusChangeSchema } from "@/lib/quotas/admin";
import { PLATFORM_ADMIN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// { status: "suspended" | "active", reason }: suspend (running sweeps pause, submits are refused) or lift.
export const PUT = withAuth<typeof PLATFORM_ADMIN, { studioId: string }>(PLATFORM_ADMIN, async ({ req, params, user }) => {
  const input = await parseBody(req, statusChangeSchema);
  const status = await setStudioStatus(await getDb(), user, params.studioId, input);
  pokeProcessRunner();
  return json({ studio: { id: params.studioId, status } });
});

export const { GET, POST, PATCH, DELETE, OPTIONS } = otherMethods(["PUT"]);
