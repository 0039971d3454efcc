/**
 * The failure policy: a chunk whose run threw goes back to the queue until it has been tried
 * MAX_CHUNK_ATTEMPTS times; then it fails, and so does its sweep (its queued chunks cancelled).
 * A chunk whose sweep was stopped meanwhile is discarded, unbilled.
 */
import "server-only";
import { and, eq, inArray } from "drizzle-orm";
import type { Db } from "@/db/client";
import { sweepChunks, sweeps } from "@/db/schema";

/** Attempts per chunk: the first run plus two retries. */
export const MAX_CHUNK_ATTEMPTS = 3;

/** The chunk as the runner holds it. */
interface HeldChunk {
  id: number;
  sweepId: string;
  chunkIndex: number;
}

/** The chunk's run threw: retry it, or fail it and its sweep after the last attempt (only while `ownerId` holds it). */
export async function recordFailure(db: Db, ownerId: string, chunk: HeldChunk, error: unknown): Promise<void> {
  const message = error instanceof Error ? error.message : String(error);
  await db.transaction(async (tx) => {
    const [current] = await tx.select().from(sweepChunks).where(eq(sweepChunks.id, chunk.id)).for("update");
    if (!current || current.status !== "running" || current.leaseOwner !== ownerId) return;
    if (current.attempts < MAX_CHUNK_ATTEMPTS) {
      await tx.update(sweepChunks).set({ status: "queued", leaseOwner: null, leaseExpiresAt: null, lastError: message }).where(eq(sweepChunks.id, chunk.id));
      return;
    }
    await tx.update(sweepChunks).set({ status: "failed", leaseOwner: null, leaseExpiresAt: null, lastError: message }).where(eq(sweepChunks.id, chunk.id));
    await tx
      .update(sweepChunks)
      .set({ status: "cancelled" })
      .where(and(eq(sweepChunks.sweepId, chunk.sweepId), eq(sweepChunks.status, "queued")));
    await tx
      .update(sweeps)
      .set({ status: "failed", reason: `chunk ${chunk.chunkIndex} failed ${MAX_CHUNK_ATTEMPTS} times: ${message}`, finishedAt: new Date() })
      .where(and(eq(sweeps.id, chunk.sweepId), inArray(sweeps.status, ["queued", "running", "paused"])));
  });
}

/** The chunk's sweep was stopped while it waited or ran: mark it cancelled, bill nothing (only while `ownerId` holds it). */
export async function discardChunk(db: Db, ownerId: string, chunkId: number, stoppedOnThread = false): Promise<void> {
  await db
    .update(sweepChunks)
    .set({ status: "cancelled", leaseOwner: null, leaseExpiresAt: null, ...(stoppedOnThread ? { lastError: "stopped on its thread: the sweep was stopped" } : {}) })
    .where(and(eq(sweepChunks.id, chunkId), eq(sweepChunks.leaseOwner, ownerId), eq(sweepChunks.status, "running")));
}
