/**
 * Queue figures for the metrics endpoint, read from the shared database, so the app's endpoint
 * shows the whole installation however many worker processes run: queue depth, running chunks,
 * lapsed leases, and counters of completed work (Prometheus derives throughput from them with
 * `rate(kickdrift_cells_completed_total[1m])`). Aggregates only: no studio or sweep is named.
 */
import "server-only";
import { sql } from "drizzle-orm";
import { z } from "@/lib/zod";
import type { DbOrTx } from "@/db/client";
import { queryRows, sqlNumber } from "@/db/rows";
import { SWEEP_STATUSES } from "@/lib/sweeps/status";
import type { Metric } from "./prometheus";

const queueRow = z.object({
  queued_chunks: sqlNumber,
  queued_cells: sqlNumber,
  paused_chunks: sqlNumber,
  running_chunks: sqlNumber,
  lapsed_chunks: sqlNumber,
  runners: sqlNumber,
  completed_chunks: sqlNumber,
  completed_cells: sqlNumber,
  compute_ms: sqlNumber,
  wall_ms: sqlNumber,
});

export async function queueMetrics(db: DbOrTx): Promise<Metric[]> {
  // Chunks claimed at least once (attempts > 0) were computed; chunks found whole in the cache at submit were not.
  const [row] = await queryRows(
    db,
    sql`
    select
      count(*) filter (where c.status = 'queued' and s.status in ('queued', 'running')) as queued_chunks,
      coalesce(sum(c.cell_count) filter (where c.status = 'queued' and s.status in ('queued', 'running')), 0) as queued_cells,
      count(*) filter (where c.status = 'queued' and s.status = 'paused') as paused_chunks,
      count(*) filter (where c.status = 'running' and c.lease_expires_at >= now()) as running_chunks,
      count(*) filter (where c.status = 'running' and (c.lease_expires_at is null or c.lease_expires_at < now())) as lapsed_chunks,
      count(distinct c.lease_owner) filter (where c.status = 'running' and c.lease_expires_at >= now()) as runners,
      count(*) filter (where c.status = 'done' and c.attempts > 0) as completed_chunks,
      coalesce(sum(c.cell_count) filter (where c.status = 'done' and c.attempts > 0), 0) as completed_cells,
      coalesce(sum(c.compute_ms) filter (where c.status = 'done'), 0) as compute_ms,
      coalesce(sum(c.wall_ms) filter (where c.status = 'done'), 0) as wall_ms
    from sweep_chunks c join sweeps s on s.id = c.sweep_id`,
    queueRow,
  );
  const statusRows = await queryRows(db, sql`select status, count(*) as n from sweeps group by status`, z.object({ status: z.string(), n: sqlNumber }));
  const byStatus = new Map(statusRows.map((r) => [r.status, r.n]));
  return [
    { name: "kickdrift_queue_depth_chunks", type: "gauge", help: "Chunks waiting to be claimed (their sweep is queued or running).", samples: [{ value: row.queued_chunks }] },
    { name: "kickdrift_queue_depth_cells", type: "gauge", help: "Cells in the chunks waiting to be claimed.", samples: [{ value: row.queued_cells }] },
    { name: "kickdrift_queue_paused_chunks", type: "gauge", help: "Chunks waiting in sweeps paused (e.g. the studio is out of minutes).", samples: [{ value: row.paused_chunks }] },
    { name: "kickdrift_running_chunks", type: "gauge", help: "Chunks held under a live lease by a runner.", samples: [{ value: row.running_chunks }] },
    { name: "kickdrift_lapsed_chunks", type: "gauge", help: "Chunks whose lease lapsed (their runner stopped) and that go back to the queue at the next look.", samples: [{ value: row.lapsed_chunks }] },
    { name: "kickdrift_active_runners", type: "gauge", help: "Runners (worker processes or in-process runners) holding at least one live lease.", samples: [{ value: row.runners }] },
    { name: "kickdrift_chunks_completed_total", type: "counter", help: "Chunks computed and written.", samples: [{ value: row.completed_chunks }] },
    { name: "kickdrift_cells_completed_total", type: "counter", help: "Cells in the chunks computed and written.", samples: [{ value: row.completed_cells }] },
    { name: "kickdrift_compute_ms_total", type: "counter", help: "Billed compute of the completed chunks, in milliseconds (work units at the published rate; wall time for sweeps metered before work units).", samples: [{ value: row.compute_ms }] },
    { name: "kickdrift_chunk_wall_ms_total", type: "counter", help: "Worker wall time of the completed chunks, in milliseconds (capacity planning; never billed).", samples: [{ value: row.wall_ms }] },
    {
      name: "kickdrift_sweeps",
      type: "gauge",
      help: "Sweeps by status.",
      samples: SWEEP_STATUSES.map((status) => ({ labels: { status }, value: byStatus.get(status) ?? 0 })),
    },
  ];
}
