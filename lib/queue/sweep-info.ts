/** What a runner needs of a chunk's sweep, read once per sweep (the spec never changes once submitted). */
import "server-only";
import { eq } from "drizzle-orm";
import type { Db } from "@/db/client";
import { sweeps } from "@/db/schema";
import type { SweepSpec } from "@/lib/sweeps/spec";

export interface SweepInfo {
  studioId: string;
  spec: SweepSpec;
  /** Some cells came from the cache at submit (partial results rows may exist). */
  hasCached: boolean;
}

/** Sweeps remembered at most; past it the memory starts afresh. */
const REMEMBERED = 1000;

export class SweepInfoCache {
  private readonly known = new Map<string, Promise<SweepInfo | null>>();

  constructor(private readonly db: Db) {}

  /** Remember a sweep's info read elsewhere (the claim that returned its chunks). */
  put(sweepId: string, info: SweepInfo): void {
    if (this.known.size > REMEMBERED) this.known.clear();
    this.known.set(sweepId, Promise.resolve(info));
  }

  /** The sweep's info (null: no such sweep); chunks launched together share one read. */
  get(sweepId: string): Promise<SweepInfo | null> {
    const known = this.known.get(sweepId);
    if (known) return known;
    const reading = this.read(sweepId);
    if (this.known.size > REMEMBERED) this.known.clear();
    this.known.set(sweepId, reading);
    // A failed or empty read is not kept: the next chunk of that sweep reads again.
    reading.then((info) => info ?? this.known.delete(sweepId), () => this.known.delete(sweepId));
    return reading;
  }

  private async read(sweepId: string): Promise<SweepInfo | null> {
    const [row] = await this.db
      .select({ studioId: sweeps.studioId, spec: sweeps.spec, cachedCells: sweeps.cachedCells })
      .from(sweeps)
      .where(eq(sweeps.id, sweepId));
    if (!row) return null;
    return { studioId: row.studioId, spec: row.spec, hasCached: row.cachedCells > 0 };
  }
}
