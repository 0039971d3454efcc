"use client";

import { useQuery } from "@tanstack/react-query";
import { Bar, BarChart, CartesianGrid, Legend, ResponsiveContainer, Tooltip, XAxis, YAxis } from "recharts";
import { Alert, Card, EmptyState, LoadingRows, PageHeading, cx } from "@/components/ui";
import { formatMinutes, formatPriceCents, TAX_NOTE, td, th } from "@/components/billing/billing-format";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDate } from "@/lib/ui/format";
import { AdminNav } from "./admin-nav";
import { FailedMeterEvents, type FailedMeterEventView } from "./failed-meter-events";

type Finance = {
  periods: { studioId: string; studioName: string; invoiceId: string; number: string | null; status: string; periodStart: string; periodEnd: string; ledgerMs: number; meteredMs: number; invoicedMs: number; totalCents: number; reconciled: boolean }[];
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
              <div className="h-64" data-testid="revenue-chart">
                <ResponsiveContainer>
                  <BarChart data={finance.data.revenueByMonth.map((m) => ({ month: m.month, packs: m.packCents / 100, overage: m.overageCents / 100 }))}>
                    <CartesianGrid strokeDasharray="3 3" />
                    <XAxis dataKey="month" fontSize={11} />
                    <YAxis fontSize={11} />
                    <Tooltip />
                    <Legend />
                    <Bar dataKey="packs" stackId="r" fill="#0f6b5c" name="Packs" />
                    <Bar dataKey="overage" stackId="r" fill="#c2410c" name="Overage invoices" />
                  </BarChart>
                </ResponsiveContainer>
              </div>
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
            {finance.data.periods.length === 0 ? (
              <EmptyState>No invoiced periods yet.</EmptyState>
            ) : (
              <div className="relative overflow-x-auto">
                <table className="w-full text-sm" data-testid="finance-periods">
                  <thead className="border-b border-line">
                    <tr>
                      {["Studio", "Period (UTC)", "Invoice", "Ledger overage min", "Delivered to meter min", "Invoiced min", "Amount", "Check"].map((h) => (
                        <th key={h} scope="col" className={th}>
                          {h}
                        </th>
                      ))}
                    </tr>
                  </thead>
                  <tbody className="divide-y divide-line">
                    {finance.data.periods.map((p) => (
                      <tr key={p.invoiceId}>
                        <td className={td}>{p.studioName}</td>
                        <td className={td}>{`${formatDate(p.periodStart)} – ${formatDate(p.periodEnd)}`}</td>
                        <td className={td}>{`${p.number ?? p.invoiceId} (${p.status})`}</td>
                        <td className={cx(td, "tabular-nums")}>{formatMinutes(p.ledgerMs)}</td>
                        <td className={cx(td, "tabular-nums")}>{formatMinutes(p.meteredMs)}</td>
                        <td className={cx(td, "tabular-nums")}>{formatMinutes(p.invoicedMs)}</td>
                        <td className={cx(td, "tabular-nums")}>{formatPriceCents(p.totalCents)}</td>
                        <td className={cx(td, p.reconciled ? "text-ok" : "font-bold text-danger")}>{p.reconciled ? "matches" : "DIFFERENCE"}</td>
                      </tr>
                    ))}
                  </tbody>
                </table>
              </div>
            )}
          </Card>
          <FailedMeterEvents events={finance.data.failedMeterEvents} />
        </div>
      )}
    </div>
  );
}
