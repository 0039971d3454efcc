import "server-only";
import { and, eq, inArray } from "drizzle-orm";
import type { Db } from "@/db/client";
import { sweepChunks, sweeps, type Sweep } from "@/db/schema";
import { ApiError } from "@/lib/errors";

/**
 * Cancels a sweep: the sweep is marked cancelled and its queued chunks too, at once. A chunk
 * running meanwhile is stopped on its worker thread when the runner next looks (every poll
 * interval, 250 ms by default) and is not billed; one that lands first is discarded unbilled.
 * Chunks already done stay billed. Cancelling a finished sweep answers 409.
 */
export async function cancelSweep(db: Db, studioId: string, sweepId: string, by: string): Promise<Sweep> {
  return db.transaction(async (tx) => {
    const [sweep] = await tx
      .select()
      .from(sweeps)
      .where(and(eq(sweeps.id, sweepId), eq(sweeps.studioId, studioId)))
      .for("update");
    if (!sweep) throw new ApiError("not_found", "Sweep not found.");
    if (sweep.status === "cancelled") return sweep;
    if (sweep.status === "done" || sweep.status === "failed")
      throw new ApiError("invalid_state", `The sweep is already ${sweep.status}; only queued, running or paused sweeps can be cancelled.`, "status");
    await tx
      .update(sweepChunks)
      .set({ status: "cancelled" })
      .where(and(eq(sweepChunks.sweepId, sweepId), inArray(sweepChunks.status, ["queued"])));
    const [updated] = await tx
      .update(sweeps)
      .set({ status: "cancelled", reason: `cancelled by ${by}`, finishedAt: new Date() })
      .where(eq(sweeps.id, sweepId))
      .returning();
    return updated;
  });
}
