"use client";

import { useQuery } from "@tanstack/react-query";
import Link from "next/link";
import { useState } from "react";
import { Alert, Button, Card, EmptyState, LoadingRows, SelectField, TextField } from "@/components/ui";
import { DataTable, useExpanded, type Column } from "@/components/data-table";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import type { LedgerGroup } from "@/lib/ledger/statement";
import { formatDateTime } from "@/lib/ui/format";
import { formatMinutes, formatPriceCents } from "./billing-format";

// The lib type itself (a type-only import: nothing of the server module reaches the browser).
type Group = LedgerGroup;
type GroupsPage = { groups: Group[]; page: number; pageSize: number; total: number };
type Chunk = { id: number; createdAt: string; chunkIndex: number | null; computeMs: number; overageMs: number; memo: string };

type Sort = "lastAt" | "kind" | "computeMs" | "overageMs" | "amountCents";

const KIND_LABEL: Record<string, string> = { purchase: "Purchase", usage: "Usage", adjustment: "Adjustment", refund: "Refund" };

/** The columns the server sorts by, keyed by their sort name. */
const GROUP_COLUMNS: (Column<Group> & { key: Sort })[] = [
  { key: "lastAt", header: "Date", className: "whitespace-nowrap", cell: (g) => formatDateTime(g.lastAt) },
  { key: "kind", header: "Kind", cell: (g) => KIND_LABEL[g.kind] ?? g.kind },
  { key: "computeMs", header: "Minutes", align: "right", numeric: true, className: (g) => (g.computeMs < 0 ? "text-danger" : "text-ok"), cell: (g) => formatMinutes(g.computeMs) },
  { key: "overageMs", header: "Overage", align: "right", numeric: true, cell: (g) => (g.overageMs ? formatMinutes(g.overageMs) : "") },
  { key: "amountCents", header: "Amount", align: "right", numeric: true, cell: (g) => (g.amountCents ? formatPriceCents(g.amountCents) : "") },
];

const detailId = (g: Group) => `ledger-detail-${g.group.replace(/[^A-Za-z0-9_-]/g, "-")}`;

const CHUNK_COLUMNS: Column<Chunk>[] = [
  // Chunks are counted from 1 on screen, as users count; the exports keep the stored 0-based chunk_index.
  { key: "chunk", header: "Chunk", numeric: true, cell: (c) => (c.chunkIndex === null ? "" : (c.chunkIndex + 1).toLocaleString("en-US")) },
  { key: "at", header: "Billed at", className: "whitespace-nowrap", cell: (c) => formatDateTime(c.createdAt) },
  { key: "ms", header: "Prepaid (ms)", align: "right", numeric: true, cellTestId: "ledger-chunk-ms", cell: (c) => (-c.computeMs).toLocaleString("en-US") },
  { key: "min", header: "Prepaid (min)", align: "right", numeric: true, cell: (c) => formatMinutes(-c.computeMs) },
  { key: "overage", header: "Overage (ms)", align: "right", numeric: true, cellTestId: "ledger-chunk-overage-ms", cell: (c) => c.overageMs.toLocaleString("en-US") },
  { key: "memo", header: "Memo", className: "break-all text-ink-muted", cell: (c) => c.memo },
];

/**
 * The ledger as finance reads it: a sweep's chunks are one row (its totals and chunk count), opened
 * into the chunks on demand; purchases, grants and refunds stay one row each. The exports carry
 * every entry (or one row per sweep) with both the stored units and the ones shown here.
 */
export function LedgerBySweep({ api, studioId }: { api: string; studioId: string }) {
  const [kind, setKind] = useState("");
  const [from, setFrom] = useState("");
  const [to, setTo] = useState("");
  const [sort, setSort] = useState<Sort>("lastAt");
  const [order, setOrder] = useState<"asc" | "desc">("desc");
  const [page, setPage] = useState(1);
  const expanded = useExpanded<string>({ single: true });
  const params = new URLSearchParams({ sort, order, page: String(page), pageSize: "20" });
  const filters = new URLSearchParams();
  if (kind) filters.set("kind", kind);
  if (from) filters.set("from", from);
  if (to) filters.set("to", to);
  for (const [key, value] of filters) params.set(key, value);
  const ledger = useQuery({ queryKey: ["billing", api, "ledger-groups", params.toString()], queryFn: () => apiFetch<GroupsPage>(`${api}/ledger/sweeps?${params}`) });
  const exportHref = (format: "csv" | "json", group: "entry" | "sweep") => {
    const q = new URLSearchParams(filters);
    q.set("format", format);
    q.set("group", group);
    return `${api}/ledger/export?${q}`;
  };
  const pages = ledger.data ? Math.max(1, Math.ceil(ledger.data.total / ledger.data.pageSize)) : 1;
  const sortBy = (column: typeof sort) => {
    if (column === sort) setOrder(order === "asc" ? "desc" : "asc");
    else {
      setSort(column);
      setOrder("desc");
    }
    setPage(1);
  };
  const link = "text-sm font-medium text-kick hover:underline";
  return (
    <Card
      title="Ledger"
      actions={
        <span className="flex flex-wrap gap-3" data-testid="ledger-exports">
          <a className={link} href={exportHref("csv", "entry")} download>
            Download CSV
          </a>
          <a className={link} href={exportHref("csv", "sweep")} download>
            CSV by sweep
          </a>
          <a className={link} href={exportHref("json", "entry")} download>
            Download JSON
          </a>
        </span>
      }
    >
      <div className="mb-4 grid grid-cols-1 gap-3 sm:grid-cols-3">
        <SelectField id="ledger-kind" label="Kind" value={kind} onChange={(e) => (setKind(e.target.value), setPage(1))}>
          <option value="">All kinds</option>
          <option value="purchase">Purchases</option>
          <option value="usage">Usage</option>
          <option value="adjustment">Adjustments</option>
          <option value="refund">Refunds</option>
        </SelectField>
        <TextField id="ledger-from" label="From (UTC)" type="date" value={from} onChange={(e) => (setFrom(e.target.value), setPage(1))} />
        <TextField id="ledger-to" label="To (UTC, inclusive)" type="date" value={to} onChange={(e) => (setTo(e.target.value), setPage(1))} />
      </div>
      {ledger.isPending ? (
        <LoadingRows label="ledger entries" />
      ) : ledger.isError ? (
        <Alert>{errorMessage(ledger.error)}</Alert>
      ) : ledger.data.groups.length === 0 ? (
        <EmptyState>No entries match.</EmptyState>
      ) : (
        <DataTable
          testId="ledger-table"
          scroll
          rows={ledger.data.groups}
          rowKey={(g) => g.group}
          rowProps={(g) => ({ testId: `ledger-group-${g.group}` })}
          columns={[
            ...GROUP_COLUMNS.map((column): Column<Group> => {
              const key = column.key as Sort;
              return { ...column, sort: { active: sort === key, order, onSort: () => sortBy(key) } };
            }),
            {
              key: "what",
              header: "What",
              className: "text-ink-muted",
              cell: (g) =>
                g.sweepId ? (
                  <span className="flex flex-wrap items-center gap-x-3 gap-y-1">
                    <Link className="font-medium text-ink hover:underline" href={`/studios/${encodeURIComponent(studioId)}/sweeps/${encodeURIComponent(g.sweepId)}`}>
                      {g.sweepName}
                    </Link>
                    <span data-testid="ledger-group-chunks">
                      {g.chunks.toLocaleString("en-US")} {g.chunks === 1 ? "chunk" : "chunks"}
                    </span>
                    <Button variant="ghost" aria-expanded={expanded.isOpen(g.group)} aria-controls={detailId(g)} onClick={() => expanded.toggle(g.group)}>
                      {expanded.isOpen(g.group) ? "Hide chunks" : "Show chunks"}
                    </Button>
                  </span>
                ) : (
                  <span className="break-all">{g.memo}</span>
                ),
            },
          ]}
          detail={{ isOpen: (g) => g.sweepId !== null && expanded.isOpen(g.group), id: detailId, render: (g) => (g.sweepId ? <ChunkDetail api={api} sweepId={g.sweepId} /> : null) }}
        />
      )}
      <div className="mt-3 flex items-center justify-between text-sm">
        <span className="text-ink-muted">{ledger.data ? `${ledger.data.total} rows · page ${page} of ${pages}` : ""}</span>
        <span className="flex gap-2">
          <Button variant="ghost" disabled={page <= 1} onClick={() => setPage(page - 1)}>
            Previous
          </Button>
          <Button variant="ghost" disabled={page >= pages} onClick={() => setPage(page + 1)}>
            Next
          </Button>
        </span>
      </div>
      <p className="mt-2 text-xs text-ink-muted">
        Minutes and overage in compute minutes, amounts in US dollars before tax. The exports give each figure twice: as stored (compute_ms, overage_ms in whole milliseconds;
        amount_cents in whole cents) and as shown here (compute_minutes, overage_minutes, amount_usd).
      </p>
    </Card>
  );
}

function ChunkDetail({ api, sweepId }: { api: string; sweepId: string }) {
  const detail = useQuery({ queryKey: ["billing", api, "ledger-chunks", sweepId], queryFn: () => apiFetch<{ sweepName: string; chunks: Chunk[] }>(`${api}/ledger/sweeps/${encodeURIComponent(sweepId)}`) });
  if (detail.isPending) return <LoadingRows label="chunks" />;
  if (detail.isError) return <Alert>{errorMessage(detail.error)}</Alert>;
  return (
    <DataTable
      testId="ledger-chunks"
      size="xs"
      caption={`Chunks of ${detail.data.sweepName}`}
      rows={detail.data.chunks}
      rowKey={(c) => c.id}
      rowProps={() => ({ testId: "ledger-chunk" })}
      columns={CHUNK_COLUMNS}
    />
  );
}
