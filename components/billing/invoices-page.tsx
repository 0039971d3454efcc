"use client";

import Link from "next/link";
import { useQuery } from "@tanstack/react-query";
import { Alert, Card, EmptyState, LoadingRows, cx } from "@/components/ui";
import { StudioShell } from "@/components/studio/studio-shell";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDate, formatDateTime } from "@/lib/ui/format";
import type { StudioRole } from "@/lib/ui/types";
import { billingApi, formatMinutes, formatPriceCents, TAX_NOTE, td, th } from "./billing-format";

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
type Line = { id: string; description: string; periodStart: number; periodEnd: number; quantityMs: number; amountCents: number; ledgerMs: number; differenceMs: number; reconciled: boolean; entries: { id: number; sweepId: string | null; chunkIndex: number | null; overageMs: number; createdAt: string }[] };
type Detail = { invoice: Invoice; lines: Line[]; reconciled: boolean };

const period = (start: string, end: string) => `${formatDate(start)} – ${formatDate(end)}`;

export function InvoicesPage({ studioId, studioName, role, initialInvoices }: { studioId: string; studioName: string; role: StudioRole; initialInvoices?: Invoice[] }) {
  const list = useQuery({
    queryKey: ["billing", studioId, "invoices"],
    queryFn: async () => (await apiFetch<{ invoices: Invoice[] }>(`${billingApi(studioId)}/invoices`)).invoices,
    // The server page's copy of the same answer: the table paints with the page (see lib/ui/queries.ts).
    ...(initialInvoices ? { initialData: initialInvoices, initialDataUpdatedAt: () => Date.now() } : {}),
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
          <div className="relative overflow-x-auto">
            <table className="w-full text-sm" data-testid="invoices-table">
              <thead className="border-b border-line">
                <tr>
                  {["Invoice", "For", "Status", "Period (UTC)", "Minutes", "Amount", "Documents"].map((h) => (
                    <th key={h} scope="col" className={th}>
                      {h}
                    </th>
                  ))}
                </tr>
              </thead>
              <tbody className="divide-y divide-line">
                {list.data.map((inv) => (
                  <tr key={inv.id}>
                    <td className={td}>
                      <Link className="font-medium text-kick hover:underline" href={`/studios/${encodeURIComponent(studioId)}/invoices/${encodeURIComponent(inv.id)}`}>
                        {inv.number ?? inv.id}
                      </Link>
                    </td>
                    <td className={td}>{inv.kind === "pack" ? "Pack purchase" : "Overage"}</td>
                    <td className={td}>{inv.status}</td>
                    <td className={td}>{inv.kind === "pack" ? formatDate(inv.periodStart) : period(inv.periodStart, inv.periodEnd)}</td>
                    <td className={cx(td, "tabular-nums")}>{formatMinutes(inv.quantityMs)}</td>
                    <td className={cx(td, "tabular-nums")}>{formatPriceCents(inv.totalCents)}</td>
                    <td className={td}><DocumentLinks invoice={inv} /></td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
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
                <table className="mt-4 w-full text-sm">
                  <thead className="border-b border-line">
                    <tr>{["Ledger entry", "When", "Sweep / chunk", "Overage minutes"].map((h) => <th key={h} scope="col" className={th}>{h}</th>)}</tr>
                  </thead>
                  <tbody className="divide-y divide-line">
                    {line.entries.map((e) => (
                      <tr key={e.id}>
                        <td className={td}>#{e.id}</td>
                        <td className={td}>{formatDateTime(e.createdAt)}</td>
                        <td className={td}>{e.sweepId ? `${e.sweepId} / ${e.chunkIndex}` : "—"}</td>
                        <td className={cx(td, "tabular-nums")}>{formatMinutes(e.overageMs)}</td>
                      </tr>
                    ))}
                  </tbody>
                </table>
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
