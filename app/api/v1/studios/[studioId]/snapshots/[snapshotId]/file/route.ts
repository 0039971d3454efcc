import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { withAuth } from "@/lib/auth/guard";
import { MEMBERS_READ } from "@/lib/auth/policies";
import { snapshotOfStudio } from "@/lib/snapshots/store";
import { fileDownload } from "@/lib/uploads/api";
import { fileOf } from "@/lib/uploads/versioned";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/** The file exactly as uploaded (same bytes, same hash). */
export const GET = withAuth<typeof MEMBERS_READ, { studioId: string; snapshotId: string }>(MEMBERS_READ, async ({ studio, params }) => {
  const snapshot = await snapshotOfStudio(await getDb(), studio.id, params.snapshotId);
  return fileDownload(fileOf(snapshot), "application/json");
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
