"use client";
/**
 * The one page of a kind of versioned upload (catalogues, snapshots): the kind's upload card for
 * engineers and owners, then every version the studio holds, by name, in one table whose name,
 * version, SHA-256 and upload-time columns are the same for every kind; the kind adds its own
 * columns (counts, file, actions) and its wording. The server page hands the list in, so it paints
 * with the page (see lib/ui/queries.ts).
 */
import { useQuery, type QueryKey } from "@tanstack/react-query";
import type { ReactNode } from "react";
import { DataTable, type Column } from "@/components/data-table";
import { Alert, Card, LoadingRows } from "@/components/ui";
import { StudioShell } from "@/components/studio/studio-shell";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDateTime } from "@/lib/ui/format";
import type { StudioRole } from "@/lib/ui/types";
import type { VersionSummary } from "@/lib/uploads/versioned";
import { seededBy } from "@/lib/ui/queries";

/** A kind of upload as the page shows it. */
export interface UploadsListKind<Summary extends VersionSummary> {
  /** The list card's title and the name column's header ("Catalogues", "Catalogue"). */
  title: string;
  nameHeader: string;
  /** "Loading {loadingLabel}…". */
  loadingLabel: string;
  /** The empty list: for those who may upload (points at the upload card above), and for the others. */
  empty: { writer: string; reader: string };
  tableTestId: string;
  queryKey: QueryKey;
  /** The list route and the key of its answer: GET {path} → `{ [field]: Summary[] }`. */
  path: string;
  field: string;
  /** The name cell (a link to the version's page, or the name alone). */
  name: (row: Summary) => ReactNode;
  /** The kind's columns between the version and the SHA-256 (counts, file name). */
  columns: Column<Summary>[];
  /** A last column of links, when the kind has any. */
  actions?: Column<Summary>;
}

export function UploadsPage<Summary extends VersionSummary>({
  kind,
  studioId,
  studioName,
  role,
  initial,
  upload,
}: {
  kind: UploadsListKind<Summary>;
  studioId: string;
  studioName: string;
  role: StudioRole;
  initial?: Summary[];
  /** The kind's upload card, drawn for engineers and owners. */
  upload: ReactNode;
}) {
  const canWrite = role === "owner" || role === "engineer";
  const list = useQuery({
    queryKey: kind.queryKey,
    queryFn: () => apiFetch<Record<string, Summary[]>>(kind.path),
    ...seededBy(initial && { [kind.field]: initial }),
  });
  const columns: Column<Summary>[] = [
    { key: "name", header: kind.nameHeader, cell: kind.name, className: "font-medium" },
    { key: "version", header: "Version", cell: (row) => `v${row.version}`, className: "font-mono" },
    ...kind.columns,
    {
      key: "sha256",
      header: "SHA-256",
      cell: (row) => <span title={row.contentHash}>{row.contentHash.slice(0, 12)}…</span>,
      className: "font-mono text-xs",
    },
    { key: "uploaded", header: "Uploaded", cell: (row) => formatDateTime(row.createdAt) },
    ...(kind.actions ? [kind.actions] : []),
  ];
  return (
    <StudioShell studioId={studioId} studioName={studioName} role={role}>
      <div className="space-y-6">
        {canWrite ? upload : null}
        <Card title={kind.title}>
          {list.isPending ? (
            <LoadingRows label={kind.loadingLabel} />
          ) : list.isError ? (
            <Alert>{errorMessage(list.error)}</Alert>
          ) : (
            <DataTable
              columns={columns}
              rows={list.data[kind.field] ?? []}
              rowKey={(row) => row.id}
              empty={canWrite ? kind.empty.writer : kind.empty.reader}
              testId={kind.tableTestId}
              scroll
            />
          )}
        </Card>
      </div>
    </StudioShell>
  );
}
