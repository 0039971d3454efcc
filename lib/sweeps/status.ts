/**
 * The life of a sweep and of its chunks: the domain's words, which the schema (db/schema.ts, as
 * column types and check constraints), the queue, the API and the pages all take from here.
 * Browser-safe (values only).
 */

/** A sweep's status: queued → running ⇄ paused → done, or failed / cancelled. */
export const SWEEP_STATUSES = ["queued", "running", "paused", "done", "failed", "cancelled"] as const;
export type SweepStatus = (typeof SWEEP_STATUSES)[number];

/** A chunk's status: queued → running (under a runner's lease) → done, or cancelled / failed. */
export const CHUNK_STATUSES = ["queued", "running", "done", "cancelled", "failed"] as const;
export type ChunkStatus = (typeof CHUNK_STATUSES)[number];
