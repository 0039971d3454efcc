/**
 * Queue figures for the metrics endpoint, read from the shared database, so the app's endpoint
 * shows the whole installation however many worker processes run: queue depth, running chunks,
 * lapsed leases, and counters of completed work (Prometheus derives throughput from them with
 * `rate(kickdrift_cells_completed_total[1m])`). Aggregates only: no studio or sweep is named.
 */
import { sql } from "drizzle-orm";
import type { DbOrTx } from "@/db/client";
import { SWEEP_STATUSES } from "@/lib/sweeps/status";
import type { Metric } from "./prometheus";

interface QueueRow {
  queued_chunks: string | number;
  queued_cells: string | number;
  paused_chunks: string | number;
  running_chunks: string | number;
  lapsed_chunks: string | number;
  runners: string | number;
  completed_chunks: string | number;
  completed_cells: string | number;
  compute_ms: string | number;
  wall_ms: string | number;
}

export async function queueMetrics(db: DbOrTx): Promise<Metric[]> {
  // Chunks claimed at least once (attempts > 0) were computed; chunks found whole in the cache at submit were not.
  const result = await db.execute(sql`
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
    from sweep_chunks c join sweeps s on s.id = c.sweep_id`);
  const row = (result as unknown as { rows: QueueRow[] }).rows[0];
  const statusResult = await db.execute(sql`select status, count(*) as n from sweeps group by status`);
  const byStatus = new Map((statusResult as unknown as { rows: { status: string; n: string | number }[] }).rows.map((r) => [r.status, Number(r.n)]));
  const n = (value: string | number) => Number(value);
  return [
    { name: "kickdrift_queue_depth_chunks", type: "gauge", help: "Chunks waiting to be claimed (their sweep is queued or running).", samples: [{ value: n(row.queued_chunks) }] },
    { name: "kickdrift_queue_depth_cells", type: "gauge", help: "Cells in the chunks waiting to be claimed.", samples: [{ value: n(row.queued_cells) }] },
    { name: "kickdrift_queue_paused_chunks", type: "gauge", help: "Chunks waiting in sweeps paused (e.g. the studio is out of minutes).", samples: [{ value: n(row.paused_chunks) }] },
    { name: "kickdrift_running_chunks", type: "gauge", help: "Chunks held under a live lease by a runner.", samples: [{ value: n(row.running_chunks) }] },
    { name: "kickdrift_lapsed_chunks", type: "gauge", help: "Chunks whose lease lapsed (their runner stopped) and that go back to the queue at the next look.", samples: [{ value: n(row.lapsed_chunks) }] },
    { name: "kickdrift_active_runners", type: "gauge", help: "Runners (worker processes or in-process runners) holding at least one live lease.", samples: [{ value: n(row.runners) }] },
    { name: "kickdrift_chunks_completed_total", type: "counter", help: "Chunks computed and written.", samples: [{ value: n(row.completed_chunks) }] },
    { name: "kickdrift_cells_completed_total", type: "counter", help: "Cells in the chunks computed and written.", samples: [{ value: n(row.completed_cells) }] },
    { name: "kickdrift_compute_ms_total", type: "counter", help: "Billed compute of the completed chunks, in milliseconds (work units at the published rate; wall time for sweeps metered before work units).", samples: [{ value: n(row.compute_ms) }] },
    { name: "kickdrift_chunk_wall_ms_total", type: "counter", help: "Worker wall time of the completed chunks, in milliseconds (capacity planning; never billed).", samples: [{ value: n(row.wall_ms) }] },
    {
      name: "kickdrift_sweeps",
      type: "gauge",
      help: "Sweeps by status.",
      samples: SWEEP_STATUSES.map((status) => ({ labels: { status }, value: byStatus.get(status) ?? 0 })),
    },
  ];
}
