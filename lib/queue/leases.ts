/**
 * A runner's leases on the chunks it holds. A claimed chunk carries its runner's id and an expiry
 * that the runner renews while the chunk runs (every third of the lease); a chunk whose lease lapsed
 * (its runner died) goes back to the queue at the next look of any runner. Claims take leases
 * (lib/queue/sql-functions.ts claimChunks); this module keeps, returns and reclaims them.
 */
import "server-only";
import { sql } from "drizzle-orm";
import { z } from "@/lib/zod";
import type { Db } from "@/db/client";
import { queryRows, sqlNumber } from "@/db/rows";

export class Leases {
  private renewTimer: NodeJS.Timeout | null = null;

  constructor(
    private readonly db: Db,
    readonly ownerId: string,
    readonly leaseMs: number,
  ) {}

  /** Renew the leases of `held()` every third of the lease until stopRenewing (an empty list skips a turn). */
  startRenewing(held: () => readonly number[], onError: (error: unknown) => void): void {
    this.stopRenewing();
    this.renewTimer = setInterval(() => {
      const ids = held();
      if (ids.length > 0) void this.renew(ids).catch(onError);
    }, Math.max(50, Math.floor(this.leaseMs / 3)));
    this.renewTimer.unref?.();
  }

  stopRenewing(): void {
    if (this.renewTimer) clearInterval(this.renewTimer);
    this.renewTimer = null;
  }

  /** Running chunks whose lease lapsed (and with `foreignToo`, every other owner's) go back to the queue. */
  async reclaimLapsed(foreignToo: boolean): Promise<void> {
    await this.db.execute(sql`
      update sweep_chunks set status = 'queued', lease_owner = null, lease_expires_at = null
      where status = 'running' and (lease_expires_at < now() ${foreignToo ? sql`or lease_owner is distinct from ${this.ownerId}` : sql``})`);
  }

  private async renew(ids: readonly number[]): Promise<void> {
    await this.db.execute(sql`
      update sweep_chunks set lease_expires_at = now() + make_interval(secs => ${this.leaseMs / 1000})
      where lease_owner = ${this.ownerId} and status = 'running' and id in (${idList(ids)})`);
  }

  /** Hand chunks still held straight back to the queue, their attempt not counted; returns how many went back. */
  async release(ids: readonly number[]): Promise<number> {
    if (ids.length === 0) return 0;
    const rows = await queryRows(
      this.db,
      sql`
        update sweep_chunks set status = 'queued', lease_owner = null, lease_expires_at = null, attempts = greatest(attempts - 1, 0)
        where lease_owner = ${this.ownerId} and status = 'running' and id in (${idList(ids)})
        returning id`,
      z.object({ id: sqlNumber }),
    );
    return rows.length;
  }
}

function idList(ids: readonly number[]) {
  return sql.join(
    ids.map((id) => sql`${id}`),
    sql`, `,
  );
}
