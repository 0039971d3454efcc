import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { sweepOfStudio } from "@/lib/queue/api";
import { sweepView } from "@/lib/queue/views";
import { MEMBERS_READ } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth<typeof MEMBERS_READ, { studioId: string; sweepId: string }>(MEMBERS_READ, async ({ studio, params }) => {
  const db = await getDb();
  return json({ sweep: await sweepView(db, await sweepOfStudio(db, studio.id, params.sweepId)) });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
