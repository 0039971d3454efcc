import type { Metadata } from "next";
import { CataloguesPage } from "@/components/catalogues/catalogues-page";
import { getDb } from "@/db/client";
import { requireStudio } from "@/lib/auth/page-guard";
import { listCatalogues } from "@/lib/catalogues/store";

export const metadata: Metadata = { title: "Catalogues" };
export const dynamic = "force-dynamic";

export default async function CataloguesRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/catalogues` });
  // The list comes with the page (the same function as GET …/catalogues), so it paints without a loading row.
  return <CataloguesPage studioId={access.studio.id} studioName={access.studio.name} role={access.role} initialCatalogues={await listCatalogues(await getDb(), access.studio.id)} />;
}
