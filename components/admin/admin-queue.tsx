"use client";

import Link from "next/link";
import { useQuery } from "@tanstack/react-query";
import { Alert, Card, EmptyState, LoadingRows, PageHeading } from "@/components/ui";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDateTime } from "@/lib/ui/format";
import type { QueueEntryView } from "@/lib/quotas/admin";
import { AdminNav } from "./admin-nav";
import { minutes, td, th } from "./admin-format";

export function AdminQueue() {
  const queue = useQuery({
    queryKey: ["admin", "queue"],
    queryFn: async () => (await apiFetch<{ sweeps: QueueEntryView[] }>("/api/v1/admin/queue")).sweeps,
    refetchInterval: 2_000,
  });
  return (
    <div>
      <PageHeading eyebrow="Platform admin" title="Queue">
        Every unfinished sweep: what runs for whom, what waits for a slot and what is paused, and why. Chunks are shared out between studios in turn.
      </PageHeading>
      <AdminNav />
      <Card title={`Unfinished sweeps${queue.data ? ` (${queue.data.length})` : ""}`}>
        {queue.isPending ? (
          <LoadingRows label="queue" />
        ) : queue.isError ? (
          <Alert>{errorMessage(queue.error)}</Alert>
        ) : queue.data.length === 0 ? (
          <EmptyState>Nothing queued or running.</EmptyState>
        ) : (
          <table className="w-full text-sm" data-testid="admin-queue">
            <thead className="border-b border-line">
              <tr>
                <th scope="col" className={th}>Studio</th>
                <th scope="col" className={th}>Sweep</th>
                <th scope="col" className={th}>Status</th>
                <th scope="col" className={th}>Chunks done · running · total</th>
                <th scope="col" className={th}>Billed / expected (ceiling, wall time)</th>
                <th scope="col" className={th}>Submitted</th>
              </tr>
            </thead>
            <tbody className="divide-y divide-line">
              {queue.data.map((s) => (
                <tr key={s.sweepId}>
                  <td className={td}>
                    <Link className="font-medium hover:underline" href={`/admin/studios/${encodeURIComponent(s.studioId)}`}>
                      {s.studioName}
                    </Link>
                  </td>
                  <td className={td}>
                    <div>{s.sweepName}</div>
                    <div className="font-mono text-xs text-ink-muted">{s.sweepId}</div>
                  </td>
                  <td className={td}>
                    <div>{s.status}</div>
                    {s.reason ? <div className="text-xs text-ink-muted">{s.reason}</div> : null}
                  </td>
                  <td className={td}>
                    {s.chunksDone} · {s.chunksRunning} · {s.chunks}
                  </td>
                  <td className={td}>
                    {minutes(s.computeMs)} / {minutes(s.estimatedComputeMs)}
                    {s.ceilingMs > 0 ? <div className="text-xs text-ink-muted">ceiling {minutes(s.ceilingMs)}</div> : null}
                    <div className="text-xs text-ink-muted">wall {minutes(s.wallMs)}</div>
                  </td>
                  <td className={`${td} text-ink-muted`}>{formatDateTime(s.createdAt)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </Card>
    </div>
  );
}
