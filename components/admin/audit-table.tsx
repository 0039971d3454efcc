"use client";

import { useQuery } from "@tanstack/react-query";
import { Alert, EmptyState, LoadingRows } from "@/components/ui";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDateTime } from "@/lib/ui/format";
import type { AuditView } from "@/lib/audit/audit";
import { td, th } from "./admin-format";

function compact(value: unknown): string {
  if (value === null || value === undefined) return "—";
  return JSON.stringify(value);
}

/** Audit entries for a query string (the same filters as the API); newest first, with a CSV link for the same rows. */
export function AuditTable({ query }: { query: URLSearchParams }) {
  const search = query.toString();
  const entries = useQuery({
    queryKey: ["admin", "audit", search],
    queryFn: async () => (await apiFetch<{ entries: AuditView[] }>(`/api/v1/admin/audit${search ? `?${search}` : ""}`)).entries,
  });
  const csv = new URLSearchParams(query);
  csv.set("format", "csv");
  return (
    <div>
      <p className="mb-3 text-sm">
        <a className="font-medium underline" href={`/api/v1/admin/audit?${csv.toString()}`} download>
          Export these entries as CSV
        </a>
      </p>
      {entries.isPending ? (
        <LoadingRows label="audit entries" />
      ) : entries.isError ? (
        <Alert>{errorMessage(entries.error)}</Alert>
      ) : entries.data.length === 0 ? (
        <EmptyState>No audit entries match.</EmptyState>
      ) : (
        <div className="relative overflow-x-auto">
          <table className="w-full text-sm" data-testid="audit-table">
            <thead className="border-b border-line">
              <tr>
                <th scope="col" className={th}>When</th>
                <th scope="col" className={th}>Who</th>
                <th scope="col" className={th}>Action</th>
                <th scope="col" className={th}>Subject</th>
                <th scope="col" className={th}>Before</th>
                <th scope="col" className={th}>After</th>
                <th scope="col" className={th}>Reason</th>
              </tr>
            </thead>
            <tbody className="divide-y divide-line">
              {entries.data.map((e) => (
                <tr key={e.id}>
                  <td className={`${td} whitespace-nowrap text-ink-muted`}>{formatDateTime(e.at)}</td>
                  <td className={td}>{e.actor}</td>
                  <td className={`${td} font-mono text-xs`}>{e.action}</td>
                  <td className={`${td} font-mono text-xs`}>
                    {e.subjectType} {e.subjectId}
                  </td>
                  <td className={`${td} font-mono text-xs`}>{compact(e.before)}</td>
                  <td className={`${td} font-mono text-xs`}>{compact(e.after)}</td>
                  <td className={td}>{e.reason || "—"}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  );
}
