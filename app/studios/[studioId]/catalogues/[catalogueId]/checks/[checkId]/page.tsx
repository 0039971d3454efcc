import type { Metadata } from "next";
import { CheckView } from "@/components/catalogues/check-view";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Catalogue check" };
export const dynamic = "force-dynamic";

export default async function CatalogueCheckRoute({ params }: { params: Promise<{ studioId: string; catalogueId: string; checkId: string }> }) {
  const { studioId, catalogueId, checkId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/catalogues/${catalogueId}/checks/${checkId}` });
  return <CheckView studioId={access.studio.id} studioName={access.studio.name} role={access.role} catalogueId={catalogueId} checkId={checkId} />;
}
