import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { cancelSweep } from "@/lib/queue/cancel";
import { sweepView } from "@/lib/queue/views";
import { ENGINEERS_WRITE } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const POST = withAuth<typeof ENGINEERS_WRITE, { studioId: string; sweepId: string }>(ENGINEERS_WRITE, async ({ studio, params, user, actor }) => {
  const db = await getDb();
  const by = user ? user.email : actor.kind === "token" ? `API token ${actor.token.prefix}…` : "a member";
  const sweep = await cancelSweep(db, studio.id, params.sweepId, by);
  return json({ sweep: await sweepView(db, sweep) });
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
