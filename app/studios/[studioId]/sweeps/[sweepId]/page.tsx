import type { Metadata } from "next";
import { SweepView } from "@/components/sweeps/sweep-view";
import type { HeldCells } from "@/components/sweeps/sweep-cells";
import { requireStudio } from "@/lib/auth/page-guard";
import { getDb } from "@/db/client";
import { ApiError } from "@/lib/errors";
import { sweepOfStudio } from "@/lib/queue/api";
import { resultsCursor, storedCells, sweepView } from "@/lib/queue/views";
import type { SweepView as SweepData } from "@/lib/sweeps/sweep-view";

export const metadata: Metadata = { title: "Stability map" };
export const dynamic = "force-dynamic";

/**
 * Up to this many done cells come with the page, so the map draws without a request after
 * hydration (a template's sweep has a few hundred; each cell is about 0.4 kB of JSON). A larger
 * sweep's cells are fetched by the client as before, not carried in the HTML.
 */
const CELLS_WITH_PAGE = 1200;

export default async function SweepRoute({ params }: { params: Promise<{ studioId: string; sweepId: string }> }) {
  const { studioId, sweepId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/sweeps/${sweepId}` });
  // The sweep comes with the page, so its frame (name, progress, controls) paints at once instead of
  // "Loading the sweep…"; the client then polls it as before. A sweep that is not there falls back to the client's answer.
  let initialSweep: SweepData | undefined;
  let initialCells: HeldCells | undefined;
  try {
    const db = await getDb();
    const sweep = await sweepOfStudio(db, access.studio.id, sweepId);
    initialSweep = await sweepView(db, sweep);
    if (sweep.cellsDone <= CELLS_WITH_PAGE) {
      // The cursor is read before the cells, as the cells route does: a row written meanwhile has a
      // larger cursor, so the client's next read (`after=<cursor>`) misses nothing.
      const cursor = await resultsCursor(db, sweep.id);
      initialCells = { cells: await storedCells(db, sweep), cursor: String(cursor) };
    }
  } catch (error) {
    if (!(error instanceof ApiError && error.status === 404)) throw error;
  }
  return <SweepView studioId={access.studio.id} studioName={access.studio.name} role={access.role} sweepId={sweepId} initialSweep={initialSweep} initialCells={initialCells} />;
}
