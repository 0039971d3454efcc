import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { MEMBERS_READ } from "@/lib/auth/policies";
import { snapshotDetail, snapshotOfStudio, snapshotSweepStart } from "@/lib/snapshots/store";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/** One snapshot version: its scene, every version of its name, and a starting sweep spec over it (scene inline) with the reasoning that placed its axes. */
export const GET = withAuth<typeof MEMBERS_READ, { studioId: string; snapshotId: string }>(MEMBERS_READ, async ({ studio, params }) => {
  const db = await getDb();
  const snapshot = await snapshotOfStudio(db, studio.id, params.snapshotId);
  return json({ snapshot: await snapshotDetail(db, snapshot), ...snapshotSweepStart(snapshot) });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
