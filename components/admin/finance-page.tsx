"use client";

import { useQuery } from "@tanstack/react-query";
import { Alert, Card, EmptyState, LoadingRows, PageHeading } from "@/components/ui";
import { formatMinutes, formatPriceCents, TAX_NOTE } from "@/components/billing/billing-format";
import { DataTable, type Column } from "@/components/data-table";
import { StackedBarChart } from "@/components/stacked-bar-chart";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDate } from "@/lib/ui/format";
import { AdminNav } from "./admin-nav";
import { FailedMeterEvents, type FailedMeterEventView } from "./failed-meter-events";

type Period = { studioId: string; studioName: string; invoiceId: string; number: string | null; status: string; periodStart: string; periodEnd: string; ledgerMs: number; meteredMs: number; invoicedMs: number; totalCents: number; reconciled: boolean };
type Finance = {
  periods: Period[];
  revenueByMonth: { month: string; packCents: number; overageCents: number }[];
  failedMeterEvents: FailedMeterEventView[];
};

export function FinancePage() {
  const finance = useQuery({ queryKey: ["admin", "finance"], queryFn: () => apiFetch<Finance>("/api/v1/admin/finance") });
  return (
    <div>
      <PageHeading eyebrow="Platform admin" title="Finance">
        Per studio and invoiced period: overage in the ledger, overage delivered to Stripe’s meter, and the quantity Stripe invoiced; a period matches when all three agree. Revenue by month. {TAX_NOTE}
      </PageHeading>
      <AdminNav />
      {finance.isPending ? (
        <LoadingRows label="finance" />
      ) : finance.isError ? (
        <Alert>{errorMessage(finance.error)}</Alert>
      ) : (
        <div className="space-y-6">
          <Card title="Revenue by month (USD)">
            {finance.data.revenueByMonth.length === 0 ? (
              <EmptyState>No revenue yet.</EmptyState>
            ) : (
              <StackedBarChart
                testId="revenue-chart"
                legend
                data={finance.data.revenueByMonth.map((m) => ({ month: m.month, packs: m.packCents / 100, overage: m.overageCents / 100 }))}
                xKey="month"
                bars={[
                  { key: "packs", name: "Packs", fill: "#0f6b5c" },
                  { key: "overage", name: "Overage invoices", fill: "#c2410c" },
                ]}
              />
            )}
          </Card>
          <Card
            title="Usage against meters against invoices"
            actions={
              <a className="text-sm font-medium text-kick hover:underline" href="/api/v1/admin/finance?format=csv" download>
                Download reconciliation CSV (per month)
              </a>
            }
          >
            <DataTable testId="finance-periods" scroll empty="No invoiced periods yet." rows={finance.data.periods} rowKey={(p) => p.invoiceId} columns={PERIOD_COLUMNS} />
          </Card>
          <FailedMeterEvents events={finance.data.failedMeterEvents} />
        </div>
      )}
    </div>
  );
}

const PERIOD_COLUMNS: Column<Period>[] = [
  { key: "studio", header: "Studio", cell: (p) => p.studioName },
  { key: "period", header: "Period (UTC)", cell: (p) => `${formatDate(p.periodStart)} – ${formatDate(p.periodEnd)}` },
  { key: "invoice", header: "Invoice", cell: (p) => `${p.number ?? p.invoiceId} (${p.status})` },
  { key: "ledger", header: "Ledger overage min", numeric: true, cell: (p) => formatMinutes(p.ledgerMs) },
  { key: "metered", header: "Delivered to meter min", numeric: true, cell: (p) => formatMinutes(p.meteredMs) },
  { key: "invoiced", header: "Invoiced min", numeric: true, cell: (p) => formatMinutes(p.invoicedMs) },
  { key: "amount", header: "Amount", numeric: true, cell: (p) => formatPriceCents(p.totalCents) },
  { key: "check", header: "Check", className: (p) => (p.reconciled ? "text-ok" : "font-bold text-danger"), cell: (p) => (p.reconciled ? "matches" : "DIFFERENCE") },
];
