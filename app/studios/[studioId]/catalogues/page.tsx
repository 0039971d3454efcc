import type { Metadata } from "next";
import { CataloguesPage } from "@/components/catalogues/catalogues-page";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Catalogues" };
export const dynamic = "force-dynamic";

export default async function CataloguesRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/catalogues` });
  return <CataloguesPage studioId={access.studio.id} studioName={access.studio.name} role={access.role} />;
}
