import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { readSnapshotUpload } from "@/lib/snapshots/api";
import { ENGINEERS_WRITE, MEMBERS_READ } from "@/lib/auth/policies";
import { SNAPSHOT_LIMITS } from "@/lib/snapshots/format";
import { listSnapshots, saveSnapshot, snapshotDetail } from "@/lib/snapshots/store";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth(MEMBERS_READ, async ({ studio }) => {
  return json({ snapshots: await listSnapshots(await getDb(), studio.id), limits: SNAPSHOT_LIMITS });
});

export const POST = withAuth(ENGINEERS_WRITE, async ({ req, studio, user }) => {
  const { name, file } = await readSnapshotUpload(req);
  const db = await getDb();
  const snapshot = await saveSnapshot(db, studio.id, { name, fileName: file.fileName, bytes: file.bytes, createdByUserId: user?.id ?? null });
  return json({ snapshot: await snapshotDetail(db, snapshot) }, 201);
});

export const { PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET", "POST"]);
