/**
 * Result-cache keys after the fact. Chunks run without scenario keys (keying costs up to a third of
 * a cheap cell's simulation); each recorded run is keyed afterwards on the pool while its runner
 * holds no chunk, and a submit that meets a run not keyed yet keys it itself (lib/queue/submit.ts).
 */
import "server-only";
import { and, eq } from "drizzle-orm";
import type { Db } from "@/db/client";
import { sweepResults } from "@/db/schema";
import { PackedView } from "@/lib/sweeps/packed";
import type { ChunkPool } from "@/lib/sweeps/pool";
import { dropBlobFile, putBlob, readBlob } from "./result-store";
import type { SweepInfoCache } from "./sweep-info";

/** Recorded runs waiting for their keys, at most (beyond it, submit keys a run itself when it needs it). */
const MAX_TO_KEY = 100_000;

interface RecordedRun {
  sweepId: string;
  chunkIndex: number;
}

export class Keyer {
  private readonly waiting: RecordedRun[] = [];
  private busy = false;

  constructor(
    private readonly db: Db,
    private readonly pool: ChunkPool,
    private readonly info: SweepInfoCache,
    /** True once the runner crashed: a rewrite that finishes afterwards is not stored. */
    private readonly crashed: () => boolean,
    private readonly onError: (error: unknown) => void,
  ) {}

  /** A run was recorded: key it later. */
  add(run: RecordedRun): void {
    if (this.waiting.length < MAX_TO_KEY) this.waiting.push(run);
  }

  /** Runs still to key (waiting, or being keyed now). */
  get pending(): number {
    return this.waiting.length + (this.busy ? 1 : 0);
  }

  /** Whether a run waits and none is being keyed. */
  get ready(): boolean {
    return this.waiting.length > 0 && !this.busy;
  }

  /** Key the next waiting run on the pool (call while the pool is idle); settles when done, never rejects. */
  keyNext(): Promise<void> | null {
    const run = this.waiting.shift();
    if (!run) return null;
    this.busy = true;
    return this.keyStored(run)
      .catch(this.onError)
      .finally(() => {
        this.busy = false;
      });
  }

  /**
   * Rewrite a stored run with every cell's scenario key, so later quotes and submits of the studio
   * find its cells without keying them. The row moves to the new blob only if it has not changed
   * meanwhile (its change cursor, which stays as it is: the cells are the same); the old file goes a
   * minute later, as an export may be reading it.
   */
  private async keyStored(run: RecordedRun): Promise<void> {
    const info = await this.info.get(run.sweepId);
    if (!info) return;
    const [row] = await this.db
      .select()
      .from(sweepResults)
      .where(and(eq(sweepResults.sweepId, run.sweepId), eq(sweepResults.chunkIndex, run.chunkIndex)));
    if (!row || !row.complete) return;
    const stored = await readBlob(row);
    if (new PackedView(stored).hasKeys) return;
    const outcome = await this.pool.run({ kind: "keys", chunkIndex: run.chunkIndex, spec: info.spec, packed: stored });
    if (this.crashed()) return;
    const blob = await putBlob(run.sweepId, run.chunkIndex, `k${row.recordedSeq}`, outcome.packed);
    const moved = await this.db
      .update(sweepResults)
      .set({ location: blob.location, bytes: blob.bytes, data: blob.data })
      .where(and(eq(sweepResults.id, row.id), eq(sweepResults.recordedSeq, row.recordedSeq)))
      .returning({ id: sweepResults.id });
    if (moved.length === 0) {
      await dropBlobFile(blob.location);
      return;
    }
    const old = row.location;
    if (old && old !== blob.location) setTimeout(() => void dropBlobFile(old).catch(this.onError), 60_000).unref?.();
  }
}
