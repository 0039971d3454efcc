"use client";

import Link from "next/link";
import { useQuery } from "@tanstack/react-query";
import { Alert, Card, EmptyState, LoadingRows, PageHeading } from "@/components/ui";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDateTime } from "@/lib/ui/format";
import type { QueueEntryView } from "@/lib/quotas/admin";
import { DataTable, type Column } from "@/components/data-table";
import { AdminNav } from "./admin-nav";
import { minutes } from "./admin-format";

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
          <DataTable testId="admin-queue" rows={queue.data} rowKey={(s) => s.sweepId} columns={QUEUE_COLUMNS} />
        )}
      </Card>
    </div>
  );
}

const QUEUE_COLUMNS: Column<QueueEntryView>[] = [
  {
    key: "studio",
    header: "Studio",
    cell: (s) => (
      <Link className="font-medium hover:underline" href={`/admin/studios/${encodeURIComponent(s.studioId)}`}>
        {s.studioName}
      </Link>
    ),
  },
  {
    key: "sweep",
    header: "Sweep",
    cell: (s) => (
      <>
        <div>{s.sweepName}</div>
        <div className="font-mono text-xs text-ink-muted">{s.sweepId}</div>
      </>
    ),
  },
  {
    key: "status",
    header: "Status",
    cell: (s) => (
      <>
        <div>{s.status}</div>
        {s.reason ? <div className="text-xs text-ink-muted">{s.reason}</div> : null}
      </>
    ),
  },
  { key: "chunks", header: "Chunks done · running · total", cell: (s) => `${s.chunksDone} · ${s.chunksRunning} · ${s.chunks}` },
  {
    key: "compute",
    header: "Billed / expected (ceiling, wall time)",
    cell: (s) => (
      <>
        {minutes(s.computeMs)} / {minutes(s.estimatedComputeMs)}
        {s.ceilingMs > 0 ? <div className="text-xs text-ink-muted">ceiling {minutes(s.ceilingMs)}</div> : null}
        <div className="text-xs text-ink-muted">wall {minutes(s.wallMs)}</div>
      </>
    ),
  },
  { key: "submitted", header: "Submitted", cell: (s) => formatDateTime(s.createdAt), className: "text-ink-muted" },
];
