"use client";

import { useMutation, useQuery } from "@tanstack/react-query";
import { Bar, BarChart, CartesianGrid, ResponsiveContainer, Tooltip, XAxis, YAxis } from "recharts";
import { Alert, Button, Card, EmptyState, LoadingRows } from "@/components/ui";
import { StudioShell } from "@/components/studio/studio-shell";
import type { CreditPack } from "@/lib/billing/packs";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import type { StudioRole } from "@/lib/ui/types";
import { OVERAGE_DAYS_UNTIL_DUE } from "@/lib/billing/packs";
import { LedgerBySweep } from "./ledger-by-sweep";
import { formatDateTime } from "@/lib/ui/format";
import { billingApi, formatMinutes, formatPriceCents, TAX_NOTE } from "./billing-format";
import { DataTable, type Column } from "@/components/data-table";
import { StackedBarChart } from "@/components/stacked-bar-chart";
import { BillingDetailsCard } from "./billing-details";
import { OverageSwitch } from "./overage-switch";
import { formatCompute } from "@/lib/billing/format";
import { METERING_NOTE } from "@/lib/sweeps/metering-rate";

type Summary = {
  balanceMs: number;
  lowBalanceMs: number;
  packs: CreditPack[];
  overage: {
    allowed: boolean;
    permitted: boolean;
    on: boolean;
    held: boolean;
    graceDays: number;
    unpaidInvoices: { id: string; number: string | null; status: string; totalCents: number; dueAt: string; overageOffAt: string; overdue: boolean; overageOff: boolean }[];
    capMs: number;
    centsPerMinute: number;
    thisMonthMs: number;
  };
  month: { key: string; usedMs: number; capMs: number };
};
type SweepUsage = { sweepId: string | null; name: string; usedMs: number };
type Usage = { days: number; byDay: { day: string; usedMs: number; overageMs: number }[]; bySweep: SweepUsage[]; byMember: { userId: string | null; email: string; usedMs: number }[] };

const SWEEP_USAGE_COLUMNS: Column<SweepUsage>[] = [
  { key: "sweep", header: "Sweep", cell: (sweep) => sweep.name },
  { key: "ms", header: "Billed (ms)", align: "right", numeric: true, cellTestId: "usage-sweep-ms", cell: (sweep) => sweep.usedMs.toLocaleString("en") },
  { key: "billed", header: "Billed", align: "right", numeric: true, cell: (sweep) => formatCompute(sweep.usedMs) },
];

type PaymentCheck = { sessionId: string; state: "credited" | "processing" | "failed" | "open" | "expired" | "refused"; amountCents: number; creditedMs: number; message: string };

export function BillingPage({ studioId, studioName, role, checkout, sessionId }: { studioId: string; studioName: string; role: StudioRole; checkout: string | null; sessionId: string | null }) {
  const api = billingApi(studioId);
  // "Check my payment": asks Stripe about this session (and credits it if paid), so the page never claims a payment Stripe has not confirmed.
  const payment = useQuery({
    queryKey: ["billing", studioId, "payment", sessionId],
    queryFn: () => apiFetch<PaymentCheck>(`${api}/checkout/${encodeURIComponent(sessionId ?? "")}`, { method: "POST" }),
    enabled: sessionId !== null,
    refetchInterval: (query) => (query.state.data && ["credited", "failed", "expired", "refused"].includes(query.state.data.state) ? false : query.state.dataUpdateCount < 30 ? 2_000 : 30_000),
  });
  const summary = useQuery({
    queryKey: ["billing", studioId, "summary"],
    queryFn: () => apiFetch<Summary>(api),
    // Back from the payment page: poll while Stripe's confirmation is on its way.
    refetchInterval: (query) => (checkout === "success" && query.state.dataUpdateCount < 60 ? 1_000 : false),
  });
  const buy = useMutation({
    mutationFn: (packId: string) => apiFetch<{ url: string }>(`${api}/checkout`, { method: "POST", body: { packId } }),
    onSuccess: ({ url }) => window.location.assign(url),
  });

  return (
    <StudioShell studioId={studioId} studioName={studioName} role={role}>
      <div className="space-y-6">
        {checkout === "success" && sessionId ? (
          <div data-testid="payment-check">
            {payment.isError ? (
              <Alert>{errorMessage(payment.error)}</Alert>
            ) : !payment.data ? (
              <Alert tone="info">Checking the payment with Stripe…</Alert>
            ) : (
              <Alert tone={payment.data.state === "credited" ? "ok" : payment.data.state === "processing" || payment.data.state === "open" ? "info" : undefined}>
                {payment.data.message}{" "}
                {payment.data.state === "processing" || payment.data.state === "open" ? (
                  <Button variant="secondary" onClick={() => void payment.refetch()} disabled={payment.isFetching}>
                    Check my payment
                  </Button>
                ) : null}
              </Alert>
            )}
          </div>
        ) : checkout === "success" ? (
          <Alert tone="info">Back from the payment page. The minutes appear on the balance once Stripe confirms the payment.</Alert>
        ) : checkout === "cancelled" ? (
          <Alert tone="info">Checkout cancelled; nothing was charged.</Alert>
        ) : null}
        <div className="grid grid-cols-1 gap-6 lg:grid-cols-[20rem_minmax(0,1fr)]">
          <Card title="Balance">
            {summary.isPending ? (
              <LoadingRows label="balance" />
            ) : summary.isError ? (
              <Alert>{errorMessage(summary.error)}</Alert>
            ) : (
              <div className="space-y-3 text-sm">
                <p>
                  <span className="text-4xl font-bold tabular-nums" data-testid="balance-minutes">
                    {formatMinutes(summary.data.balanceMs)}
                  </span>{" "}
                  compute minutes
                </p>
                {summary.data.balanceMs <= summary.data.lowBalanceMs ? <Alert tone="info">The balance is low: sweeps pause at zero unless overage is allowed.</Alert> : null}
                <p className="text-ink-muted">
                  Used in {summary.data.month.key}: {formatMinutes(summary.data.month.usedMs)} of {formatMinutes(summary.data.month.capMs)} minutes.
                </p>
                {summary.data.overage.unpaidInvoices.map((inv) => (
                  <Alert key={inv.id} tone={inv.overdue ? undefined : "info"}>
                    <span data-testid="unpaid-invoice">
                      Invoice {inv.number ?? inv.id} ({formatPriceCents(inv.totalCents)}) {inv.overdue ? "is overdue" : "is unpaid"}: due {formatDateTime(inv.dueAt)}.{" "}
                      {inv.overageOff
                        ? "Overage is switched off until it is paid."
                        : `If it is still unpaid on ${formatDateTime(inv.overageOffAt)}, overage is switched off until it is paid.`}{" "}
                      <a className="underline" href={`/studios/${encodeURIComponent(studioId)}/invoices/${encodeURIComponent(inv.id)}`}>
                        Open the invoice
                      </a>
                    </span>
                  </Alert>
                ))}
                <p className="text-ink-muted" data-testid="overage-status">
                  {summary.data.overage.allowed && summary.data.overage.held
                    ? "Overage is switched off while an invoice is unpaid past its grace period: sweeps pause at zero balance. Paying the invoice switches it back on."
                    : summary.data.overage.permitted && !summary.data.overage.on
                    ? "Overage is switched off by the studio's owner: sweeps pause with “out of minutes” at zero and resume after a top-up."
                    : summary.data.overage.allowed
                    ? `Overage allowed: past the balance, compute is invoiced monthly at ${formatPriceCents(summary.data.overage.centsPerMinute)} a minute (${summary.data.month.key}: ${formatMinutes(summary.data.overage.thisMonthMs)} of ${formatMinutes(summary.data.overage.capMs)} minutes). Each invoice covers one calendar month (UTC), from the 1st, the same month counted here.`
                    : "Overage is off: sweeps pause with “out of minutes” at zero and resume after a top-up."}
                </p>
                {role === "owner" ? <OverageSwitch studioId={studioId} permitted={summary.data.overage.permitted} on={summary.data.overage.on} /> : null}
                <p className="text-xs text-ink-muted" data-testid="overdue-terms">
                  Terms: overage invoices are due {OVERAGE_DAYS_UNTIL_DUE} days after they are issued. An invoice still unpaid {summary.data.overage.graceDays} days after its due date switches overage off
                  until it is paid; prepaid minutes keep working. Owners and finance are e-mailed when a payment fails or an invoice is overdue.
                </p>
              </div>
            )}
          </Card>
          <Card title="Buy compute minutes">
            {buy.isError ? <Alert>{errorMessage(buy.error)}</Alert> : null}
            <ul className="grid grid-cols-1 gap-4 md:grid-cols-3">
              {(summary.data?.packs ?? []).map((pack) => (
                <li key={pack.id} className="flex flex-col justify-between rounded-lg border border-line p-4" data-testid={`pack-${pack.id}`}>
                  <div className="space-y-1">
                    <h3 className="font-semibold">{pack.name}</h3>
                    <p className="text-2xl font-bold tabular-nums">{formatPriceCents(pack.priceCents)}</p>
                    <p className="text-sm">{pack.minutes.toLocaleString("en-US")} compute minutes</p>
                    <p className="text-xs text-ink-muted">{pack.summary}</p>
                  </div>
                  <Button className="mt-3" disabled={buy.isPending} onClick={() => buy.mutate(pack.id)} aria-label={`Buy ${pack.name}`}>
                    Buy {pack.name}
                  </Button>
                </li>
              ))}
            </ul>
            <p className="mt-3 text-xs text-ink-muted">{TAX_NOTE} Payment happens on Stripe&apos;s checkout page.</p>
          </Card>
        </div>
        <BillingDetailsCard studioId={studioId} role={role} />
        <LedgerBySweep api={api} studioId={studioId} />
        <UsageCharts api={api} studioId={studioId} />
      </div>
    </StudioShell>
  );
}

const minutesOf = (ms: number) => Math.round((ms / 60_000) * 100) / 100;

function UsageCharts({ api, studioId }: { api: string; studioId: string }) {
  const usage = useQuery({ queryKey: ["billing", studioId, "usage"], queryFn: () => apiFetch<Usage>(`${api}/usage?days=30`) });
  if (usage.isPending) return <LoadingRows label="usage" />;
  if (usage.isError) return <Alert>{errorMessage(usage.error)}</Alert>;
  const byDay = usage.data.byDay.map((d) => ({ day: d.day, prepaid: minutesOf(d.usedMs - d.overageMs), overage: minutesOf(d.overageMs) }));
  const bySweep = usage.data.bySweep.slice(0, 10).map((s) => ({ key: s.sweepId ?? "none", name: s.name, minutes: minutesOf(s.usedMs) }));
  const byMember = usage.data.byMember.map((m) => ({ key: m.userId ?? "none", name: m.email, minutes: minutesOf(m.usedMs) }));
  return (
    <div className="grid grid-cols-1 gap-6 xl:grid-cols-3">
      <Card title="Usage by day (last 30 days, minutes)">
        {byDay.length === 0 ? (
          <EmptyState>No compute used in the last 30 days.</EmptyState>
        ) : (
          <StackedBarChart
            testId="usage-by-day"
            data={byDay}
            xKey="day"
            bars={[
              { key: "prepaid", name: "Prepaid", fill: "#0f6b5c" },
              { key: "overage", name: "Overage", fill: "#c2410c" },
            ]}
          />
        )}
      </Card>
      <HorizontalBars title="Usage by sweep (compute minutes, top 10)" data={bySweep} testId="usage-by-sweep" className="xl:col-span-2" />
      <Card title="Billed per sweep">
        <DataTable
          testId="usage-sweep-table"
          empty="Nothing yet."
          rows={usage.data.bySweep}
          rowKey={(sweep) => sweep.sweepId ?? "none"}
          rowProps={(sweep) => ({ testId: `usage-sweep-${sweep.sweepId ?? "none"}` })}
          columns={SWEEP_USAGE_COLUMNS}
        />
        <p className="mt-3 text-xs text-ink-muted">{METERING_NOTE}</p>
      </Card>
      <HorizontalBars title="Usage by member (compute minutes)" data={byMember} testId="usage-by-member" />
    </div>
  );
}

/** Longest label drawn beside a bar; the full name is in the label's tooltip and in the bar's. */
const LABEL_CHARS = 30;
const BAR_ROW_PX = 34;

/**
 * Horizontal bars, one row per item at a fixed height (the chart grows with the rows, so labels never
 * overlap), labelled by name — keyed by id, so two sweeps of the same name stay two bars — with the
 * axis naming its unit.
 */
function HorizontalBars({ title, data, testId, className }: { title: string; data: { key: string; name: string; minutes: number }[]; testId: string; className?: string }) {
  const names = new Map(data.map((d) => [d.key, d.name]));
  const short = (key: string) => {
    const name = names.get(key) ?? key;
    return name.length > LABEL_CHARS ? `${name.slice(0, LABEL_CHARS - 1)}…` : name;
  };
  return (
    <Card title={title} className={className}>
      {data.length === 0 ? (
        <EmptyState>Nothing yet.</EmptyState>
      ) : (
        <div style={{ height: 56 + data.length * BAR_ROW_PX }} data-testid={testId}>
          <ResponsiveContainer>
            <BarChart data={data} layout="vertical" margin={{ left: 8, right: 16, bottom: 16 }}>
              <CartesianGrid strokeDasharray="3 3" />
              <XAxis type="number" fontSize={11} label={{ value: "compute minutes", position: "insideBottom", offset: -8, fontSize: 11 }} />
              <YAxis
                type="category"
                dataKey="key"
                width={210}
                fontSize={11}
                interval={0}
                tick={({ x, y, payload }: { x?: number | string; y?: number | string; payload?: { value?: unknown } }) => (
                  <text x={x} y={y} dy={4} textAnchor="end" fontSize={11} fill="currentColor" data-testid="bar-label">
                    <title>{names.get(String(payload?.value)) ?? String(payload?.value)}</title>
                    {short(String(payload?.value))}
                  </text>
                )}
              />
              <Tooltip labelFormatter={(key) => names.get(String(key)) ?? String(key)} formatter={(value) => [`${Number(value).toLocaleString("en-US")} min`, "Compute"]} />
              <Bar dataKey="minutes" fill="#0f6b5c" name="Compute minutes" barSize={18} />
            </BarChart>
          </ResponsiveContainer>
        </div>
      )}
    </Card>
  );
}
