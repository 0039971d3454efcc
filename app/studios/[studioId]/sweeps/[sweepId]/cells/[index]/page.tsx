import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { CellView } from "@/components/sweeps/cell-view";
import type { CellDetail } from "@/components/sweeps/sweep-api";
import { getDb } from "@/db/client";
import { requireStudio } from "@/lib/auth/page-guard";
import { ApiError } from "@/lib/errors";
import { cellIndexParam, sweepOfStudio } from "@/lib/queue/api";
import { cellSummary, sweepView } from "@/lib/queue/views";
import type { SweepView as SweepData } from "@/lib/sweeps/sweep-view";

export const metadata: Metadata = { title: "Cell" };
export const dynamic = "force-dynamic";

export default async function CellRoute({ params }: { params: Promise<{ studioId: string; sweepId: string; index: string }> }) {
  const { studioId, sweepId, index } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/sweeps/${sweepId}/cells/${index}` });
  // Cell indices are whole numbers written in decimal; anything else names no cell.
  if (!/^(0|[1-9][0-9]{0,8})$/.test(index)) notFound();
  // The sweep and the cell's stored result come with the page, so its verdict, parameters and
  // metrics paint at once; the client then fetches only the series, which the engine recomputes.
  // A sweep or cell that is not there falls back to the client's answer (its error message).
  let initialSweep: SweepData | undefined;
  let initialCell: CellDetail["cell"] | undefined;
  try {
    const db = await getDb();
    const sweep = await sweepOfStudio(db, access.studio.id, sweepId);
    initialSweep = await sweepView(db, sweep);
    const cell = await cellSummary(db, sweep, cellIndexParam(index, sweep));
    // A cell not run yet has no verdict to show: the client's answer decides what the page says.
    if (cell.verdict !== null && cell.metrics !== null) initialCell = { ...cell, verdict: cell.verdict, metrics: cell.metrics };
  } catch (error) {
    if (!(error instanceof ApiError && error.status === 404)) throw error;
  }
  return (
    <CellView
      studioId={access.studio.id}
      studioName={access.studio.name}
      role={access.role}
      sweepId={sweepId}
      index={Number(index)}
      initialSweep={initialSweep}
      initialCell={initialCell}
    />
  );
}
