import type { Metadata } from "next";
import { SnapshotsPage } from "@/components/snapshots/snapshots-page";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Snapshots" };
export const dynamic = "force-dynamic";

export default async function SnapshotsRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/snapshots` });
  return <SnapshotsPage studioId={access.studio.id} studioName={access.studio.name} role={access.role} />;
}
