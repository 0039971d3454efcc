import type { Metadata } from "next";
import { SweepBuilder } from "@/components/sweeps/sweep-builder";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "New sweep" };
export const dynamic = "force-dynamic";

export default async function NewSweepRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  // Finance members read sweeps and invoices but do not spend compute: they get the 403 page here.
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/sweeps/new`, roles: ["owner", "engineer"] });
  return <SweepBuilder studioId={access.studio.id} studioName={access.studio.name} role={access.role} />;
}
