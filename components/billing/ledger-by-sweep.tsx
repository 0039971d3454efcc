"use client";

import { useQuery } from "@tanstack/react-query";
import Link from "next/link";
import { Fragment, useState } from "react";
import { Alert, Button, Card, EmptyState, LoadingRows, SelectField, TextField, cx } from "@/components/ui";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import type { LedgerGroup } from "@/lib/ledger/statement";
import { formatDateTime } from "@/lib/ui/format";
import { formatMinutes, formatPriceCents, td, th } from "./billing-format";

// The lib type itself (a type-only import: nothing of the server module reaches the browser).
type Group = LedgerGroup;
type GroupsPage = { groups: Group[]; page: number; pageSize: number; total: number };
type Chunk = { id: number; createdAt: string; chunkIndex: number | null; computeMs: number; overageMs: number; memo: string };

const SORTS = [
  ["lastAt", "Date"],
  ["kind", "Kind"],
  ["computeMs", "Minutes"],
  ["overageMs", "Overage"],
  ["amountCents", "Amount"],
] as const;

const KIND_LABEL: Record<string, string> = { purchase: "Purchase", usage: "Usage", adjustment: "Adjustment", refund: "Refund" };

/**
 * The ledger as finance reads it: a sweep's chunks are one row (its totals and chunk count), opened
 * into the chunks on demand; purchases, grants and refunds stay one row each. The exports carry
 * every entry (or one row per sweep) with both the stored units and the ones shown here.
 */
export function LedgerBySweep({ api, studioId }: { api: string; studioId: string }) {
  const [kind, setKind] = useState("");
  const [from, setFrom] = useState("");
  const [to, setTo] = useState("");
  const [sort, setSort] = useState<(typeof SORTS)[number][0]>("lastAt");
  const [order, setOrder] = useState<"asc" | "desc">("desc");
  const [page, setPage] = useState(1);
  const [open, setOpen] = useState<string | null>(null);
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
        <div className="relative overflow-x-auto">
          <table className="w-full text-sm" data-testid="ledger-table">
            <thead className="border-b border-line">
              <tr>
                {SORTS.map(([column, label]) => (
                  <th key={column} scope="col" className={th} aria-sort={sort === column ? (order === "asc" ? "ascending" : "descending") : "none"}>
                    <button type="button" className="uppercase hover:text-ink" onClick={() => sortBy(column)}>
                      {label}
                      {sort === column ? (order === "asc" ? " ▲" : " ▼") : ""}
                    </button>
                  </th>
                ))}
                <th scope="col" className={th}>
                  What
                </th>
              </tr>
            </thead>
            <tbody className="divide-y divide-line">
              {ledger.data.groups.map((g) => {
                const expanded = open === g.group;
                const detailId = `ledger-detail-${g.group.replace(/[^A-Za-z0-9_-]/g, "-")}`;
                return (
                  <Fragment key={g.group}>
                    <tr data-testid={`ledger-group-${g.group}`}>
                      <td className={cx(td, "whitespace-nowrap")}>{formatDateTime(g.lastAt)}</td>
                      <td className={td}>{KIND_LABEL[g.kind] ?? g.kind}</td>
                      <td className={cx(td, "text-right tabular-nums", g.computeMs < 0 ? "text-danger" : "text-ok")}>{formatMinutes(g.computeMs)}</td>
                      <td className={cx(td, "text-right tabular-nums")}>{g.overageMs ? formatMinutes(g.overageMs) : ""}</td>
                      <td className={cx(td, "text-right tabular-nums")}>{g.amountCents ? formatPriceCents(g.amountCents) : ""}</td>
                      <td className={cx(td, "text-ink-muted")}>
                        {g.sweepId ? (
                          <span className="flex flex-wrap items-center gap-x-3 gap-y-1">
                            <Link className="font-medium text-ink hover:underline" href={`/studios/${encodeURIComponent(studioId)}/sweeps/${encodeURIComponent(g.sweepId)}`}>
                              {g.sweepName}
                            </Link>
                            <span data-testid="ledger-group-chunks">
                              {g.chunks.toLocaleString("en-US")} {g.chunks === 1 ? "chunk" : "chunks"}
                            </span>
                            <Button variant="ghost" aria-expanded={expanded} aria-controls={detailId} onClick={() => setOpen(expanded ? null : g.group)}>
                              {expanded ? "Hide chunks" : "Show chunks"}
                            </Button>
                          </span>
                        ) : (
                          <span className="break-all">{g.memo}</span>
                        )}
                      </td>
                    </tr>
                    {expanded && g.sweepId ? (
                      <tr id={detailId}>
                        <td colSpan={6} className="bg-surface-muted px-3 py-3">
                          <ChunkDetail api={api} sweepId={g.sweepId} />
                        </td>
                      </tr>
                    ) : null}
                  </Fragment>
                );
              })}
            </tbody>
          </table>
        </div>
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
    <table className="w-full text-xs" data-testid="ledger-chunks">
      <caption className="pb-2 text-left text-sm font-medium text-ink">Chunks of {detail.data.sweepName}</caption>
      <thead className="border-b border-line">
        <tr>
          <th scope="col" className={th}>
            Chunk
          </th>
          <th scope="col" className={th}>
            Billed at
          </th>
          <th scope="col" className={cx(th, "text-right")}>
            Prepaid (ms)
          </th>
          <th scope="col" className={cx(th, "text-right")}>
            Prepaid (min)
          </th>
          <th scope="col" className={cx(th, "text-right")}>
            Overage (ms)
          </th>
          <th scope="col" className={th}>
            Memo
          </th>
        </tr>
      </thead>
      <tbody className="divide-y divide-line">
        {detail.data.chunks.map((c) => (
          <tr key={c.id} data-testid="ledger-chunk">
            {/* Chunks are counted from 1 on screen, as users count; the exports keep the stored 0-based chunk_index. */}
            <td className={cx(td, "tabular-nums")}>{c.chunkIndex === null ? "" : (c.chunkIndex + 1).toLocaleString("en-US")}</td>
            <td className={cx(td, "whitespace-nowrap")}>{formatDateTime(c.createdAt)}</td>
            <td className={cx(td, "text-right tabular-nums")} data-testid="ledger-chunk-ms">
              {(-c.computeMs).toLocaleString("en-US")}
            </td>
            <td className={cx(td, "text-right tabular-nums")}>{formatMinutes(-c.computeMs)}</td>
            <td className={cx(td, "text-right tabular-nums")} data-testid="ledger-chunk-overage-ms">
              {c.overageMs.toLocaleString("en-US")}
            </td>
            <td className={cx(td, "break-all text-ink-muted")}>{c.memo}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
