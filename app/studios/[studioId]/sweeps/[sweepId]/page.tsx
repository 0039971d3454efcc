import type { Metadata } from "next";
import { headers } from "next/headers";
import { SweepView } from "@/components/sweeps/sweep-view";
import { requireStudio } from "@/lib/auth/page-guard";
import { getDb } from "@/db/client";
import { ApiError } from "@/lib/errors";
import { sweepOfStudio } from "@/lib/queue/api";
import { sweepView } from "@/lib/queue/views";
import type { SweepView as SweepData } from "@/lib/sweeps/sweep-view";
import { earlyFetchScript, firstCellsUrl } from "@/components/sweeps/early-cells";

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
  // The map's cells are asked for while the page's scripts load (early-cells.ts), not after hydration;
  // the script runs only with this request's CSP nonce (proxy.ts). An async module script runs as soon
  // as it is parsed: a plain inline script waits for the style sheet above it to arrive first, which
  // on a loaded machine held the request back by several hundred ms.
  const nonce = (await headers()).get("x-nonce") ?? undefined;
  return (
    <>
      {initialSweep ? <script type="module" async nonce={nonce} dangerouslySetInnerHTML={{ __html: earlyFetchScript(firstCellsUrl(access.studio.id, sweepId)) }} /> : null}
      <SweepView studioId={access.studio.id} studioName={access.studio.name} role={access.role} sweepId={sweepId} initialSweep={initialSweep} />
    </>
  );
}
