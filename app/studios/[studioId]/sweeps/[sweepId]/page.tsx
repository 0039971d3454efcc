import type { Metadata } from "next";
import { SweepView } from "@/components/sweeps/sweep-view";
import { requireStudio } from "@/lib/auth/page-guard";
import { getDb } from "@/db/client";
import { ApiError } from "@/lib/errors";
import { sweepOfStudio } from "@/lib/queue/api";
import { sweepView } from "@/lib/queue/views";
import type { SweepView as SweepData } from "@/lib/sweeps/sweep-view";

export const metadata: Metadata = { title: "Stability map" };
export const dynamic = "force-dynamic";

export default async function SweepRoute({ params }: { params: Promise<{ studioId: string; sweepId: string }> }) {
  const { studioId, sweepId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/sweeps/${sweepId}` });
  // The sweep comes with the page, so its frame (name, progress, controls) paints at once instead of
  // "Loading the sweep…"; the client then polls it as before. A sweep that is not there falls back to the client's answer.
  let initialSweep: SweepData | undefined;
  try {
    const db = await getDb();
    initialSweep = await sweepView(db, await sweepOfStudio(db, access.studio.id, sweepId));
  } catch (error) {
    if (!(error instanceof ApiError && error.status === 404)) throw error;
  }
  return <SweepView studioId={access.studio.id} studioName={access.studio.name} role={access.role} sweepId={sweepId} initialSweep={initialSweep} />;
}
