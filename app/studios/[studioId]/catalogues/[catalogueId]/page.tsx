import type { Metadata } from "next";
import { CatalogueView } from "@/components/catalogues/catalogue-view";
import { getDb } from "@/db/client";
import { requireStudio } from "@/lib/auth/page-guard";
import { catalogueDetail, catalogueOfStudio, listChecks, type CatalogueDetail, type CheckSummary } from "@/lib/catalogues/store";
import { ApiError } from "@/lib/errors";

export const metadata: Metadata = { title: "Catalogue" };
export const dynamic = "force-dynamic";

export default async function CatalogueRoute({ params }: { params: Promise<{ studioId: string; catalogueId: string }> }) {
  const { studioId, catalogueId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/catalogues/${catalogueId}` });
  // The catalogue and its checks come with the page (the same answer as GET …/catalogues/{id}, read
  // together), so it paints without a loading row. One that is not there falls back to the client's answer.
  let initialDetail: { catalogue: CatalogueDetail; checks: CheckSummary[] } | undefined;
  try {
    const db = await getDb();
    const catalogue = await catalogueOfStudio(db, access.studio.id, catalogueId);
    const [detail, checks] = await Promise.all([catalogueDetail(db, catalogue), listChecks(db, catalogue)]);
    initialDetail = { catalogue: detail, checks };
  } catch (error) {
    if (!(error instanceof ApiError && error.status === 404)) throw error;
  }
  return <CatalogueView studioId={access.studio.id} studioName={access.studio.name} role={access.role} catalogueId={catalogueId} initialDetail={initialDetail} />;
}
