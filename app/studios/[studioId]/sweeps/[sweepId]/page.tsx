import type { Metadata } from "next";
import { SweepView } from "@/components/sweeps/sweep-view";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Stability map" };
export const dynamic = "force-dynamic";

export default async function SweepRoute({ params }: { params: Promise<{ studioId: string; sweepId: string }> }) {
  const { studioId, sweepId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/sweeps/${sweepId}` });
  return <SweepView studioId={access.studio.id} studioName={access.studio.name} role={access.role} sweepId={sweepId} />;
}
