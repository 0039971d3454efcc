import type { Metadata } from "next";
import { SnapshotsPage } from "@/components/snapshots/snapshots-page";
import { getDb } from "@/db/client";
import { requireStudio } from "@/lib/auth/page-guard";
import { listSnapshots } from "@/lib/snapshots/store";

export const metadata: Metadata = { title: "Snapshots" };
export const dynamic = "force-dynamic";

export default async function SnapshotsRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/snapshots` });
  // The list comes with the page (the same function as GET …/snapshots), so it paints without a loading row.
  return <SnapshotsPage studioId={access.studio.id} studioName={access.studio.name} role={access.role} initialSnapshots={await listSnapshots(await getDb(), access.studio.id)} />;
}
