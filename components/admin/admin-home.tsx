"use client";

import Link from "next/link";
import { useQuery } from "@tanstack/react-query";
import { useState } from "react";
import { Alert, Card, EmptyState, LoadingRows, PageHeading, TextField, cx } from "@/components/ui";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { queryKeys } from "@/lib/ui/queries";
import type { StudioUsageView } from "@/lib/quotas/admin";
import { DataTable, type Column } from "@/components/data-table";
import { AdminNav } from "./admin-nav";
import { minutes } from "./admin-format";
import { Pager, usePaged } from "./pager";

export function AdminHome() {
  const [filter, setFilter] = useState("");
  const studios = useQuery({
    queryKey: queryKeys.adminStudios,
    queryFn: async () => (await apiFetch<{ studios: StudioUsageView[] }>("/api/v1/admin/studios")).studios,
    refetchInterval: 5_000,
  });
  const needle = filter.trim().toLowerCase();
  const matches = (...values: (string | null | undefined)[]) => !needle || values.some((value) => value?.toLowerCase().includes(needle));
  const paged = usePaged((studios.data ?? []).filter((studio) => matches(studio.name, studio.id, studio.status)));

  return (
    <div>
      <PageHeading eyebrow="Platform admin" title="Studios">
        This month&apos;s compute against each studio&apos;s cap, its balance, its sweeps and its status. Open a studio to change its quotas, grant or
        revoke minutes, or suspend it.
      </PageHeading>
      <AdminNav />
      <div className="mb-6 max-w-sm">
        <TextField id="admin-filter" label="Filter by name or id" hint="also matches a status: active, suspended" type="search" value={filter} onChange={(event) => setFilter(event.target.value)} />
      </div>
      <Card title={`Studios${studios.data ? ` (${studios.data.length})` : ""}`}>
        {studios.isPending ? (
          <LoadingRows label="studios" />
        ) : studios.isError ? (
          <Alert>{errorMessage(studios.error)}</Alert>
        ) : studios.data.length === 0 ? (
          <EmptyState>No studios yet.</EmptyState>
        ) : (
          <DataTable
            testId="admin-studios"
            scroll
            rows={paged.rows}
            rowKey={(studio) => studio.id}
            columns={STUDIO_COLUMNS}
            footer={<Pager paged={paged} label="studios" />}
          />
        )}
      </Card>
    </div>
  );
}

const STUDIO_COLUMNS: Column<StudioUsageView>[] = [
  {
    key: "studio",
    header: "Studio",
    cell: (studio) => (
      <>
        <Link href={`/admin/studios/${encodeURIComponent(studio.id)}`} className="font-medium underline-offset-2 hover:underline">
          {studio.name}
        </Link>
        <div className="font-mono text-xs text-ink-muted">{studio.id}</div>
      </>
    ),
  },
  { key: "status", header: "Status", cell: (studio) => studio.status, className: (studio) => studio.status === "suspended" && "font-semibold text-danger" },
  {
    key: "month",
    header: "This month / cap",
    cell: (studio) => (
      <>
        <div>
          {minutes(studio.monthUsedMs)} / {minutes(studio.monthlyComputeMs)}
        </div>
        <div className="mt-1 h-1.5 w-32 overflow-hidden rounded bg-surface-muted" aria-hidden="true">
          <div className={cx("h-full", studio.monthUsedPercent >= 100 ? "bg-danger" : "bg-action")} style={{ width: `${Math.min(100, studio.monthUsedPercent)}%` }} />
        </div>
        <div className="text-xs text-ink-muted">{studio.monthUsedPercent}%</div>
      </>
    ),
  },
  { key: "balance", header: "Balance", cell: (studio) => minutes(studio.balanceMs) },
  { key: "sweeps", header: "Sweeps running · queued · paused", cell: (studio) => `${studio.runningSweeps} · ${studio.queuedSweeps} · ${studio.pausedSweeps}` },
  { key: "members", header: "Members", cell: (studio) => studio.memberCount },
];
