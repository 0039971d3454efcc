import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { MEMBERS_READ } from "@/lib/auth/policies";
import { catalogueOfStudio, checkOfCatalogue, checkView } from "@/lib/catalogues/store";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/** The check with its sweep's progress, the pair matrix, the recommendation and its confirmation. */
export const GET = withAuth<typeof MEMBERS_READ, { studioId: string; catalogueId: string; checkId: string }>(MEMBERS_READ, async ({ studio, params }) => {
  const db = await getDb();
  const catalogue = await catalogueOfStudio(db, studio.id, params.catalogueId);
  const check = await checkOfCatalogue(db, catalogue, params.checkId);
  return json({ check: await checkView(db, catalogue, check) });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
