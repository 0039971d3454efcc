import type { Metadata } from "next";
import { StudioHome } from "@/components/studio/studio-home";
import { getDb } from "@/db/client";
import { requireStudio } from "@/lib/auth/page-guard";
import { studioOverview } from "@/lib/studios/overview";

export const metadata: Metadata = { title: "Studio" };
export const dynamic = "force-dynamic";

export default async function StudioHomeRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}` });
  // The overview comes with the page (the same function as GET …/overview), so the cards paint without loading rows.
  return <StudioHome studioId={access.studio.id} studioName={access.studio.name} role={access.role} initialOverview={await studioOverview(await getDb(), access.studio.id, access.role)} />;
}
