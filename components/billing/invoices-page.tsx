"use client";

import Link from "next/link";
import { useQuery } from "@tanstack/react-query";
import { Alert, Card, EmptyState, LoadingRows, cx } from "@/components/ui";
import { StudioShell } from "@/components/studio/studio-shell";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDate, formatDateTime } from "@/lib/ui/format";
import type { StudioRole } from "@/lib/ui/types";
import { billingApi, formatMinutes, formatPriceCents, TAX_NOTE } from "./billing-format";
import { DataTable, type Column } from "@/components/data-table";
import { seededBy } from "@/lib/ui/queries";

type Invoice = {
  id: string;
  number: string | null;
  status: string;
  periodStart: string;
  periodEnd: string;
  quantityMs: number;
  totalCents: number;
  finalizedAt: string | null;
  kind: "overage" | "pack";
  hostedInvoiceUrl: string | null;
  invoicePdfUrl: string | null;
};

/** The invoice's hosted page and PDF at Stripe (set once it is finalised). */
function DocumentLinks({ invoice }: { invoice: Invoice }) {
  if (!invoice.hostedInvoiceUrl && !invoice.invoicePdfUrl) return <span className="text-ink-muted">after finalising</span>;
  const label = invoice.number ?? invoice.id;
  return (
    <span className="flex gap-3">
      {invoice.hostedInvoiceUrl ? (
        <a className="text-kick hover:underline" href={invoice.hostedInvoiceUrl} target="_blank" rel="noreferrer" aria-label={`View invoice ${label} online`}>
          View
        </a>
      ) : null}
      {invoice.invoicePdfUrl ? (
        <a className="text-kick hover:underline" href={invoice.invoicePdfUrl} target="_blank" rel="noreferrer" aria-label={`Download invoice ${label} as PDF`}>
          PDF
        </a>
      ) : null}
    </span>
  );
}
type Entry = { id: number; sweepId: string | null; chunkIndex: number | null; overageMs: number; createdAt: string };
type Line = { id: string; description: string; periodStart: number; periodEnd: number; quantityMs: number; amountCents: number; ledgerMs: number; differenceMs: number; reconciled: boolean; entries: Entry[] };
type Detail = { invoice: Invoice; lines: Line[]; reconciled: boolean };

const period = (start: string, end: string) => `${formatDate(start)} – ${formatDate(end)}`;

const INVOICE_COLUMNS: Column<Invoice>[] = [
  { key: "for", header: "For", cell: (inv) => (inv.kind === "pack" ? "Pack purchase" : "Overage") },
  { key: "status", header: "Status", cell: (inv) => inv.status },
  { key: "period", header: "Period (UTC)", cell: (inv) => (inv.kind === "pack" ? formatDate(inv.periodStart) : period(inv.periodStart, inv.periodEnd)) },
  { key: "minutes", header: "Minutes", numeric: true, cell: (inv) => formatMinutes(inv.quantityMs) },
  { key: "amount", header: "Amount", numeric: true, cell: (inv) => formatPriceCents(inv.totalCents) },
  { key: "documents", header: "Documents", cell: (inv) => <DocumentLinks invoice={inv} /> },
];

const ENTRY_COLUMNS: Column<Entry>[] = [
  { key: "entry", header: "Ledger entry", cell: (e) => `#${e.id}` },
  { key: "when", header: "When", cell: (e) => formatDateTime(e.createdAt) },
  { key: "chunk", header: "Sweep / chunk", cell: (e) => (e.sweepId ? `${e.sweepId} / ${e.chunkIndex}` : "—") },
  { key: "overage", header: "Overage minutes", numeric: true, cell: (e) => formatMinutes(e.overageMs) },
];

export function InvoicesPage({ studioId, studioName, role, initialInvoices }: { studioId: string; studioName: string; role: StudioRole; initialInvoices?: Invoice[] }) {
  const list = useQuery({
    queryKey: ["billing", studioId, "invoices"],
    queryFn: async () => (await apiFetch<{ invoices: Invoice[] }>(`${billingApi(studioId)}/invoices`)).invoices,
    // The server page's copy of the same answer: the table paints with the page (see lib/ui/queries.ts).
    ...seededBy(initialInvoices),
  });
  return (
    <StudioShell studioId={studioId} studioName={studioName} role={role}>
      <Card
        title="Invoices"
        actions={
          <a className="text-sm font-medium text-kick hover:underline" href={`${billingApi(studioId)}/invoices?format=csv`} download>
            Download CSV
          </a>
        }
      >
        <p className="mb-3 text-sm text-ink-muted">
          Each pack purchase has its own paid invoice. Overage compute (usage past the prepaid balance, when allowed) is invoiced per calendar month (UTC), from the 1st. {TAX_NOTE}
        </p>
        {list.isPending ? (
          <LoadingRows label="invoices" />
        ) : list.isError ? (
          <Alert>{errorMessage(list.error)}</Alert>
        ) : list.data.length === 0 ? (
          <EmptyState>No invoices yet. A period&apos;s invoice appears when the period closes.</EmptyState>
        ) : (
          <DataTable
            testId="invoices-table"
            scroll
            rows={list.data}
            rowKey={(inv) => inv.id}
            columns={[
              {
                key: "invoice",
                header: "Invoice",
                cell: (inv) => (
                  <Link className="font-medium text-kick hover:underline" href={`/studios/${encodeURIComponent(studioId)}/invoices/${encodeURIComponent(inv.id)}`}>
                    {inv.number ?? inv.id}
                  </Link>
                ),
              },
              ...INVOICE_COLUMNS,
            ]}
          />
        )}
      </Card>
    </StudioShell>
  );
}

export function InvoiceDetailPage({ studioId, studioName, role, invoiceId }: { studioId: string; studioName: string; role: StudioRole; invoiceId: string }) {
  const detail = useQuery({ queryKey: ["billing", studioId, "invoice", invoiceId], queryFn: () => apiFetch<Detail>(`${billingApi(studioId)}/invoices/${encodeURIComponent(invoiceId)}`) });
  return (
    <StudioShell studioId={studioId} studioName={studioName} role={role}>
      <p className="mb-4 text-sm">
        <Link className="text-kick hover:underline" href={`/studios/${encodeURIComponent(studioId)}/invoices`}>
          ← All invoices
        </Link>
      </p>
      {detail.isPending ? (
        <LoadingRows label="invoice" />
      ) : detail.isError ? (
        <Alert>{errorMessage(detail.error)}</Alert>
      ) : (
        <div className="space-y-6">
          <Card title={`Invoice ${detail.data.invoice.number ?? detail.data.invoice.id}`}>
            <dl className="grid grid-cols-2 gap-3 text-sm sm:grid-cols-5">
              <div><dt className="text-ink-muted">Status</dt><dd data-testid="invoice-status">{detail.data.invoice.status}</dd></div>
              <div><dt className="text-ink-muted">Period (UTC)</dt><dd>{period(detail.data.invoice.periodStart, detail.data.invoice.periodEnd)}</dd></div>
              <div><dt className="text-ink-muted">Minutes</dt><dd className="tabular-nums">{formatMinutes(detail.data.invoice.quantityMs)}</dd></div>
              <div><dt className="text-ink-muted">Amount</dt><dd className="tabular-nums">{formatPriceCents(detail.data.invoice.totalCents)}</dd></div>
              <div><dt className="text-ink-muted">Finalised</dt><dd>{detail.data.invoice.finalizedAt ? formatDateTime(detail.data.invoice.finalizedAt) : "not yet"}</dd></div>
            </dl>
            <p className="mt-3 text-sm">
              <DocumentLinks invoice={detail.data.invoice} />
            </p>
            <div className="mt-4" data-testid="reconciliation">
              {detail.data.invoice.kind === "pack" ? (
                <Alert tone="ok">Pack purchase: its minutes were credited to the balance when it was paid; nothing metered to reconcile.</Alert>
              ) : detail.data.reconciled ? (
                <Alert tone="ok">Reconciled: every line matches the ledger&apos;s overage entries for its period.</Alert>
              ) : (
                <Alert>Difference: at least one line does not match the ledger (see below).</Alert>
              )}
            </div>
            <p className="mt-2 text-xs text-ink-muted">{TAX_NOTE}</p>
          </Card>
          {detail.data.lines.map((line) => (
            <Card key={line.id} title={line.description || line.id}>
              <dl className="grid grid-cols-2 gap-3 text-sm sm:grid-cols-5">
                <div><dt className="text-ink-muted">Invoiced minutes</dt><dd className="tabular-nums">{formatMinutes(line.quantityMs)}</dd></div>
                <div><dt className="text-ink-muted">Ledger minutes</dt><dd className="tabular-nums">{formatMinutes(line.ledgerMs)}</dd></div>
                <div><dt className="text-ink-muted">Difference (ms)</dt><dd className={cx("tabular-nums", line.differenceMs !== 0 && "font-bold text-danger")} data-testid="line-difference">{line.differenceMs}</dd></div>
                <div><dt className="text-ink-muted">Amount</dt><dd className="tabular-nums">{formatPriceCents(line.amountCents)}</dd></div>
                <div><dt className="text-ink-muted">Check</dt><dd>{line.reconciled ? "matches" : "DIFFERENCE"}</dd></div>
              </dl>
              {line.entries.length ? (
                <DataTable className="mt-4" rows={line.entries} rowKey={(e) => e.id} columns={ENTRY_COLUMNS} />
              ) : (
                <p className="mt-3 text-sm text-ink-muted">No overage entries in the ledger for this period.</p>
              )}
            </Card>
          ))}
        </div>
      )}
    </StudioShell>
  );
}
