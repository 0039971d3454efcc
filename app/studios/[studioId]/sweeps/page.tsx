import type { Metadata } from "next";
import { SweepsList } from "@/components/sweeps/sweeps-list";
import { getDb } from "@/db/client";
import { requireStudio } from "@/lib/auth/page-guard";
import { sweepsListPage } from "@/lib/queue/api";
import { sweepListRow } from "@/components/sweeps/sweep-list-row";

export const metadata: Metadata = { title: "Sweeps" };
export const dynamic = "force-dynamic";

/** The list's page size (PAGE_SIZE of components/sweeps/sweeps-list.tsx, which uses this copy only when they agree). */
const FIRST_PAGE = { page: 1, pageSize: 20 };

export default async function SweepsRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/sweeps` });
  // The first page comes with the page (the same answer as GET …/sweeps), so the table paints without a loading row.
  // Only what the table shows travels with the page (sweep-list-row.ts), not each sweep's spec and axes.
  const first = await sweepsListPage(await getDb(), access.studio.id, FIRST_PAGE);
  const initialList = { ...first, sweeps: first.sweeps.map(sweepListRow) };
  return <SweepsList studioId={access.studio.id} studioName={access.studio.name} role={access.role} initialList={initialList} />;
}
