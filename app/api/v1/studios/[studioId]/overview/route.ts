import { getDb } from "@/db/client";
import { MEMBERS_READ } from "@/lib/auth/policies";
import { withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { studioOverview } from "@/lib/studios/overview";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/** The studio home: compute, sweeps running and finished, catalogue checks; money only for owners and finance. */
export const GET = withAuth(MEMBERS_READ, async ({ studio, role }) =>
  json({ overview: await studioOverview(await getDb(), studio.id, role ?? null) }),
);

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
