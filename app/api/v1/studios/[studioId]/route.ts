import { withAuth } from "@/lib/auth/guard";
import { MEMBERS_READ } from "@/lib/auth/policies";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { getDb } from "@/db/client";
import { studioView } from "@/lib/studios/studios";
import { studioSuspension } from "@/lib/studios/suspension";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth(MEMBERS_READ, async ({ studio, role }) => {
  // A suspended studio's members see why and since when (the banner of every studio page).
  return json({ studio: studioView(studio), role, suspension: await studioSuspension(await getDb(), studio) });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
