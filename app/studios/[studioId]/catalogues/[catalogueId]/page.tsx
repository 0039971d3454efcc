import type { Metadata } from "next";
import { CatalogueView } from "@/components/catalogues/catalogue-view";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Catalogue" };
export const dynamic = "force-dynamic";

export default async function CatalogueRoute({ params }: { params: Promise<{ studioId: string; catalogueId: string }> }) {
  const { studioId, catalogueId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/catalogues/${catalogueId}` });
  return <CatalogueView studioId={access.studio.id} studioName={access.studio.name} role={access.role} catalogueId={catalogueId} />;
}
