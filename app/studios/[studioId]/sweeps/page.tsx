import type { Metadata } from "next";
import { SweepsList } from "@/components/sweeps/sweeps-list";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Sweeps" };
export const dynamic = "force-dynamic";

export default async function SweepsRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/sweeps` });
  return <SweepsList studioId={access.studio.id} studioName={access.studio.name} role={access.role} />;
}
