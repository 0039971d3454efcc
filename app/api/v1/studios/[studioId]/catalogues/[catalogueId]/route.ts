import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { MEMBERS_READ } from "@/lib/auth/policies";
import { catalogueDetail, catalogueOfStudio, listChecks } from "@/lib/catalogues/store";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth<typeof MEMBERS_READ, { studioId: string; catalogueId: string }>(MEMBERS_READ, async ({ studio, params }) => {
  const db = await getDb();
  const catalogue = await catalogueOfStudio(db, studio.id, params.catalogueId);
  return json({ catalogue: await catalogueDetail(db, catalogue), checks: await listChecks(db, catalogue) });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
