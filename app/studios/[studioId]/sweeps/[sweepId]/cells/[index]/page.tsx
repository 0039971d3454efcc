import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { CellView } from "@/components/sweeps/cell-view";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Cell" };
export const dynamic = "force-dynamic";

export default async function CellRoute({ params }: { params: Promise<{ studioId: string; sweepId: string; index: string }> }) {
  const { studioId, sweepId, index } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/sweeps/${sweepId}/cells/${index}` });
  // Cell indices are whole numbers written in decimal; anything else names no cell.
  if (!/^(0|[1-9][0-9]{0,8})$/.test(index)) notFound();
  return <CellView studioId={access.studio.id} studioName={access.studio.name} role={access.role} sweepId={sweepId} index={Number(index)} />;
}
