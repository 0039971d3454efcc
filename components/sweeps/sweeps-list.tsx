"use client";
/** The studio's sweeps, newest first: status with its reason, progress, minutes used, who created it and when; search by name, filter by creator and status; pages. */
import Link from "next/link";
import { useQuery } from "@tanstack/react-query";
import { useEffect, useState } from "react";
import { Alert, ButtonLink, Card, LoadingRows, SelectField, TextField, cx } from "@/components/ui";
import { DataTable, type Column } from "@/components/data-table";
import { StudioShell } from "@/components/studio/studio-shell";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDateTime } from "@/lib/ui/format";
import type { StudioRole } from "@/lib/ui/types";
import { SWEEP_STATUSES, formatMinutes, isActive, sweepKeys, sweepsPath, type Sweep, type SweepStatus } from "./sweep-api";
import type { SweepListRow, SweepsListPage } from "./sweep-list-row";
import { seededBy } from "@/lib/ui/queries";

const PAGE_SIZE = 20;

/** The list's columns; the name links to the sweep's page in this studio. */
function sweepColumns(studioId: string): Column<SweepListRow>[] {
  return [
    {
      key: "name",
      header: "Sweep",
      className: "font-medium",
      cell: (sweep) => (
        <Link href={`/studios/${studioId}/sweeps/${sweep.id}`} className="text-action hover:underline">
          {sweep.name || `Sweep ${sweep.id.slice(0, 8)}`}
        </Link>
      ),
    },
    {
      key: "status",
      header: "Status",
      cell: (sweep) => (
        <>
          <StatusBadge status={sweep.status} />
          {sweep.reason ? <p className="mt-1 max-w-xs text-xs text-ink-muted">{sweep.reason}</p> : null}
        </>
      ),
    },
    {
      key: "progress",
      header: "Progress [cells]",
      cell: (sweep) => (
        <div className="flex items-center gap-2">
          <div className="h-2 w-24 overflow-hidden rounded bg-surface-muted" aria-hidden="true">
            <div className="h-full bg-action" style={{ width: `${progressPercent(sweep)}%` }} />
          </div>
          <span className="font-mono text-xs">
            {sweep.cellsDone.toLocaleString("en")} / {sweep.cells.toLocaleString("en")}
          </span>
        </div>
      ),
    },
    { key: "compute", header: "Compute used [min]", className: "font-mono text-xs", cell: (sweep) => formatMinutes(sweep.computeMs) },
    { key: "creator", header: "Created by", className: "text-xs", cellTestId: "sweep-creator", cell: (sweep) => sweep.createdBy?.name ?? "—" },
    { key: "created", header: "Created", className: "font-mono text-xs", cell: (sweep) => formatDateTime(sweep.createdAt) },
  ];
}

export function StatusBadge({ status }: { status: SweepStatus }) {
  const tones: Record<SweepStatus, string> = {
    queued: "border-line text-ink-muted",
    running: "border-action/60 text-action",
    paused: "border-kick/60 text-kick",
    done: "border-ok/60 text-ok",
    failed: "border-danger/60 text-danger",
    cancelled: "border-ink/40 text-ink-muted",
  };
  return <span className={cx("inline-flex items-center rounded-full border px-2 py-0.5 font-mono text-xs", tones[status])} data-testid="sweep-status">{status}</span>;
}

export function progressPercent(sweep: Pick<Sweep, "cells" | "cellsDone">): number {
  if (sweep.cells <= 0) return 0;
  return Math.min(100, Math.floor((sweep.cellsDone / sweep.cells) * 100));
}

export function SweepsList({
  studioId,
  studioName,
  role,
  initialList,
}: {
  studioId: string;
  studioName: string;
  role: StudioRole;
  /** The server page's first page (no filters): the table paints with the page. */
  initialList?: SweepsListPage;
}) {
  const [status, setStatus] = useState<"" | SweepStatus>("");
  const [creator, setCreator] = useState("");
  const [search, setSearch] = useState("");
  const [searched, setSearched] = useState("");
  const [page, setPage] = useState(1);
  // The search follows typing after a short pause, not on every key.
  useEffect(() => {
    const timer = setTimeout(() => {
      setSearched(search.trim());
      setPage(1);
    }, 300);
    return () => clearTimeout(timer);
  }, [search]);
  // The server's copy answers only the query it was read for: the first page with no filter, at this page size.
  const initial = initialList && initialList.pageSize === PAGE_SIZE && !status && !creator && !searched && page === 1 ? initialList : undefined;
  const list = useQuery({
    queryKey: [...sweepKeys.list(studioId, status, page), creator, searched],
    queryFn: () => {
      const query = new URLSearchParams({ page: String(page), pageSize: String(PAGE_SIZE) });
      if (status) query.set("status", status);
      if (creator) query.set("createdBy", creator);
      if (searched) query.set("q", searched);
      return apiFetch<SweepsListPage>(`${sweepsPath(studioId)}?${query}`);
    },
    ...seededBy(initial),
    placeholderData: (previous) => previous,
    // Keep progress current while anything on the page still runs.
    refetchInterval: (query) => (query.state.data?.sweeps.some((sweep) => isActive(sweep.status)) ? 2000 : false),
  });
  const filtered = Boolean(status || creator || searched);
  const canRun = role === "owner" || role === "engineer";
  const pages = list.data ? Math.max(1, Math.ceil(list.data.total / list.data.pageSize)) : 1;

  return (
    <StudioShell studioId={studioId} studioName={studioName} role={role}>
      <Card
        title="Sweeps"
        actions={
          <div className="flex flex-wrap items-end gap-3">
            <TextField compact id="sweep-search" label="Name contains" type="search" maxLength={120} className="w-48 rounded-md border border-line bg-surface px-2 py-1.5 text-sm" value={search} onChange={(event) => setSearch(event.target.value)} />
            <SelectField
              compact
              id="sweep-creator-filter"
              label="Created by"
              value={creator}
              onChange={(event) => {
                setCreator(event.target.value);
                setPage(1);
              }}
            >
              <option value="">Anyone</option>
              {(list.data?.creators ?? []).map((option) => (
                <option key={option.id} value={option.id}>
                  {option.name}
                </option>
              ))}
            </SelectField>
            <SelectField
              compact
              id="sweep-status-filter"
              label="Status"
              value={status}
              onChange={(event) => {
                setStatus(event.target.value as "" | SweepStatus);
                setPage(1);
              }}
            >
              <option value="">Any</option>
              {SWEEP_STATUSES.map((option) => (
                <option key={option} value={option}>
                  {option}
                </option>
              ))}
            </SelectField>
            {canRun ? <ButtonLink href={`/studios/${studioId}/sweeps/new`}>New sweep</ButtonLink> : null}
          </div>
        }
      >
        {list.isPending ? (
          <LoadingRows label="sweeps" />
        ) : list.isError ? (
          <Alert>{errorMessage(list.error)}</Alert>
        ) : (
          <DataTable
            testId="sweeps-table"
            scroll
            empty={filtered ? "No sweeps match these filters." : canRun ? "No sweeps yet. Start one from a template with “New sweep”." : "No sweeps yet."}
            rows={list.data.sweeps}
            rowKey={(sweep) => sweep.id}
            rowProps={(sweep) => ({ testId: `sweep-row-${sweep.id}` })}
            columns={sweepColumns(studioId)}
            footer={
            <nav aria-label="Pages of sweeps" className="mt-4 flex items-center justify-between text-sm">
              <span className="text-ink-muted">
                Page {list.data.page} of {pages} · {list.data.total.toLocaleString("en")} sweeps
              </span>
              <span className="flex gap-2">
                <button type="button" className="rounded-md border border-line px-3 py-1 disabled:opacity-50" disabled={page <= 1} onClick={() => setPage(page - 1)}>
                  Previous
                </button>
                <button type="button" className="rounded-md border border-line px-3 py-1 disabled:opacity-50" disabled={page >= pages} onClick={() => setPage(page + 1)}>
                  Next
                </button>
              </span>
            </nav>
            }
          />
        )}
      </Card>
    </StudioShell>
  );
}
