import type { Metadata } from "next";
import { StudioHome } from "@/components/studio/studio-home";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Studio" };
export const dynamic = "force-dynamic";

export default async function StudioHomeRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}` });
  return <StudioHome studioId={access.studio.id} studioName={access.studio.name} role={access.role} />;
}
