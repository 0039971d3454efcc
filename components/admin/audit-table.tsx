"use client";

import { useQuery } from "@tanstack/react-query";
import { useState } from "react";
import { Alert, EmptyState, LoadingRows, TextField } from "@/components/ui";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDateTime } from "@/lib/ui/format";
import type { AuditAction, AuditView } from "@/lib/audit/audit";
import { minutes } from "./admin-format";
import { AUDIT_ACTION_LABELS } from "./audit-actions";
import { Pager, usePaged } from "./pager";
import { DataTable, useExpanded } from "@/components/data-table";

/** A value of an audit entry for a person: milliseconds of compute as minutes, cents as money, the rest as it is. */
function readable(key: string, value: unknown): string {
  if (value === null || value === undefined) return "none";
  if (typeof value === "number" && /Ms$/.test(key)) return minutes(value);
  if (typeof value === "number" && /Cents$/.test(key)) return `${(value / 100).toLocaleString("en", { minimumFractionDigits: 2, maximumFractionDigits: 2 })}`;
  if (typeof value === "boolean") return value ? "yes" : "no";
  if (Array.isArray(value)) return value.join(", ");
  if (typeof value === "object") return JSON.stringify(value);
  return String(value);
}

/** Words for a field name: "monthlyComputeMs" → "monthly compute". */
function words(key: string): string {
  return key
    .replace(/(Ms|Cents|Kg)$/, "")
    .replace(/([a-z])([A-Z])/g, "$1 $2")
    .toLowerCase();
}

/** One line for the table: what changed, from → to, field by field. */
export function auditSummary(entry: Pick<AuditView, "before" | "after">): string {
  const before = (entry.before ?? {}) as Record<string, unknown>;
  const after = (entry.after ?? {}) as Record<string, unknown>;
  const keys = [...new Set([...Object.keys(before), ...Object.keys(after)])];
  if (keys.length === 0) return "—";
  return keys
    .map((key) => {
      if (entry.before === null || entry.before === undefined) return `${words(key)} ${readable(key, after[key])}`;
      if (entry.after === null || entry.after === undefined) return `${words(key)} was ${readable(key, before[key])}`;
      return `${words(key)} ${readable(key, before[key])} → ${readable(key, after[key])}`;
    })
    .join("; ");
}

/**
 * Audit entries for a query string (the same filters as the API); newest first, a page at a time,
 * searchable, each row opening into its full before and after values; a CSV link for the same rows.
 */
export function AuditTable({ query }: { query: URLSearchParams }) {
  const search = query.toString();
  const [needle, setNeedle] = useState("");
  const entries = useQuery({
    queryKey: ["admin", "audit", search],
    queryFn: async () => (await apiFetch<{ entries: AuditView[] }>(`/api/v1/admin/audit${search ? `?${search}` : ""}`)).entries,
  });
  const text = needle.trim().toLowerCase();
  const shown = (entries.data ?? []).filter(
    (e) => !text || [e.actor, e.action, AUDIT_ACTION_LABELS[e.action as AuditAction] ?? "", e.subjectId, e.reason, auditSummary(e)].some((v) => v.toLowerCase().includes(text)),
  );
  const paged = usePaged(shown);
  const expanded = useExpanded<number>();
  const csv = new URLSearchParams(query);
  csv.set("format", "csv");
  return (
    <div>
      <div className="mb-3 flex flex-wrap items-end justify-between gap-3">
        <div className="w-full max-w-xs">
          <TextField id={`audit-search-${search || "all"}`} label="Search these entries" type="search" value={needle} onChange={(e) => setNeedle(e.target.value)} />
        </div>
        <a className="text-sm font-medium underline" href={`/api/v1/admin/audit?${csv.toString()}`} download>
          Export these entries as CSV
        </a>
      </div>
      {entries.isPending ? (
        <LoadingRows label="audit entries" />
      ) : entries.isError ? (
        <Alert>{errorMessage(entries.error)}</Alert>
      ) : shown.length === 0 ? (
        <EmptyState>No audit entries match.</EmptyState>
      ) : (
        <>
          <DataTable
            testId="audit-table"
            fixed
            rows={paged.rows}
            rowKey={(e) => e.id}
            rowProps={(e) => ({ testId: "audit-row", data: { "data-action": e.action } })}
            columns={[
              { key: "when", header: "When", headerClassName: "w-40", className: "whitespace-nowrap text-ink-muted", cell: (e) => formatDateTime(e.at) },
              { key: "who", header: "Who", headerClassName: "w-48", className: "break-words", cell: (e) => e.actor },
              {
                key: "what",
                header: "What",
                headerClassName: "w-44",
                cell: (e) => (
                  <button type="button" aria-expanded={expanded.isOpen(e.id)} aria-controls={detailId(e)} onClick={() => expanded.toggle(e.id)} className="text-left font-medium text-action hover:underline">
                    {AUDIT_ACTION_LABELS[e.action as AuditAction] ?? e.action}
                  </button>
                ),
              },
              { key: "change", header: "Change", className: "break-words", cell: (e) => auditSummary(e) },
              { key: "reason", header: "Reason", headerClassName: "w-56", className: "break-words", cell: (e) => e.reason || "—" },
            ]}
            detail={{ isOpen: (e) => expanded.isOpen(e.id), id: detailId, render: (e) => <AuditDetail entry={e} />, className: "pb-3" }}
          />
          <Pager paged={paged} label="entries" />
        </>
      )}
    </div>
  );
}

const detailId = (e: AuditView) => `audit-detail-${e.id}`;

/** An entry opened: its action code, subject and studio, and the full before and after values. */
function AuditDetail({ entry: e }: { entry: AuditView }) {
  return (
    <dl className="grid gap-2 py-2 text-xs sm:grid-cols-[10rem_1fr]">
      <dt className="text-ink-muted">Action</dt>
      <dd className="font-mono">{e.action}</dd>
      <dt className="text-ink-muted">Subject</dt>
      <dd className="break-all font-mono">
        {e.subjectType} {e.subjectId}
      </dd>
      <dt className="text-ink-muted">Studio</dt>
      <dd className="break-all font-mono">{e.studioId ?? "—"}</dd>
      <dt className="text-ink-muted">Before</dt>
      <dd>
        <pre className="whitespace-pre-wrap break-all font-mono">{e.before === null ? "—" : JSON.stringify(e.before, null, 2)}</pre>
      </dd>
      <dt className="text-ink-muted">After</dt>
      <dd>
        <pre className="whitespace-pre-wrap break-all font-mono">{e.after === null ? "—" : JSON.stringify(e.after, null, 2)}</pre>
      </dd>
    </dl>
  );
}
