import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { withAuth } from "@/lib/auth/guard";
import { MEMBERS_READ } from "@/lib/auth/policies";
import { snapshotFileBytes, snapshotOfStudio } from "@/lib/snapshots/store";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/** The file exactly as uploaded (same bytes, same hash). */
export const GET = withAuth<typeof MEMBERS_READ, { studioId: string; snapshotId: string }>(MEMBERS_READ, async ({ studio, params }) => {
  const snapshot = await snapshotOfStudio(await getDb(), studio.id, params.snapshotId);
  const safeName = snapshot.fileName.replace(/[^A-Za-z0-9._ -]/g, "_");
  return new Response(Buffer.from(snapshotFileBytes(snapshot)), {
    status: 200,
    headers: {
      "content-type": "application/json",
      "content-disposition": `attachment; filename="${safeName}"`,
      "x-content-sha256": snapshot.contentHash,
      etag: `"${snapshot.contentHash}"`,
      "cache-control": "no-store",
      "x-content-type-options": "nosniff",
    },
  });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
