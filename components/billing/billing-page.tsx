"use client";

import { useMutation, useQuery } from "@tanstack/react-query";
import { useState } from "react";
import { Bar, BarChart, CartesianGrid, ResponsiveContainer, Tooltip, XAxis, YAxis } from "recharts";
import { Alert, Button, Card, EmptyState, LoadingRows, SelectField, TextField, cx } from "@/components/ui";
import { StudioShell } from "@/components/studio/studio-shell";
import type { CreditPack } from "@/lib/billing/packs";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDateTime } from "@/lib/ui/format";
import type { StudioRole } from "@/lib/ui/types";
import { OVERAGE_DAYS_UNTIL_DUE } from "@/lib/billing/packs";
import { billingApi, formatMinutes, formatPriceCents, TAX_NOTE, td, th } from "./billing-format";
import { BillingDetailsCard } from "./billing-details";
import { formatCompute } from "@/lib/billing/format";
import { METERING_NOTE } from "@/lib/sweeps/metering-rate";

type Summary = {
  balanceMs: number;
  lowBalanceMs: number;
  packs: CreditPack[];
  overage: {
    allowed: boolean;
    held: boolean;
    graceDays: number;
    unpaidInvoices: { id: string; number: string | null; status: string; totalCents: number; dueAt: string; overageOffAt: string; overdue: boolean; overageOff: boolean }[];
    capMs: number;
    centsPerMinute: number;
    thisMonthMs: number;
  };
  month: { key: string; usedMs: number; capMs: number };
};
type LedgerEntry = { id: number; kind: string; computeMs: number; overageMs: number; amountCents: number; sweepId: string | null; chunkIndex: number | null; memo: string; createdAt: string };
type LedgerPage = { entries: LedgerEntry[]; page: number; pageSize: number; total: number };
type Usage = { days: number; byDay: { day: string; usedMs: number; overageMs: number }[]; bySweep: { sweepId: string | null; name: string; usedMs: number }[]; byMember: { userId: string | null; email: string; usedMs: number }[] };

const SORTS = [
  ["createdAt", "Date"],
  ["kind", "Kind"],
  ["computeMs", "Minutes"],
  ["overageMs", "Overage"],
  ["amountCents", "Amount"],
] as const;

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
                    : summary.data.overage.allowed
                    ? `Overage allowed: past the balance, compute is invoiced monthly at ${formatPriceCents(summary.data.overage.centsPerMinute)} a minute (${summary.data.month.key}: ${formatMinutes(summary.data.overage.thisMonthMs)} of ${formatMinutes(summary.data.overage.capMs)} minutes). Each invoice covers one calendar month (UTC), from the 1st, the same month counted here.`
                    : "Overage is off: sweeps pause with “out of minutes” at zero and resume after a top-up."}
                </p>
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
        <LedgerTable api={api} />
        <UsageCharts api={api} studioId={studioId} />
      </div>
    </StudioShell>
  );
}

function LedgerTable({ api }: { api: string }) {
  const [kind, setKind] = useState("");
  const [from, setFrom] = useState("");
  const [to, setTo] = useState("");
  const [sort, setSort] = useState<(typeof SORTS)[number][0]>("createdAt");
  const [order, setOrder] = useState<"asc" | "desc">("desc");
  const [page, setPage] = useState(1);
  const params = new URLSearchParams({ sort, order, page: String(page), pageSize: "20" });
  if (kind) params.set("kind", kind);
  if (from) params.set("from", from);
  if (to) params.set("to", to);
  const ledger = useQuery({ queryKey: ["billing", api, "ledger", params.toString()], queryFn: () => apiFetch<LedgerPage>(`${api}/ledger?${params}`) });
  const csv = new URLSearchParams(params);
  csv.set("format", "csv");
  csv.delete("page");
  csv.delete("pageSize");
  const pages = ledger.data ? Math.max(1, Math.ceil(ledger.data.total / ledger.data.pageSize)) : 1;
  const sortBy = (column: typeof sort) => {
    if (column === sort) setOrder(order === "asc" ? "desc" : "asc");
    else {
      setSort(column);
      setOrder("desc");
    }
    setPage(1);
  };
  return (
    <Card
      title="Ledger"
      actions={
        <a className="text-sm font-medium text-kick hover:underline" href={`${api}/ledger?${csv}`} download>
          Download CSV
        </a>
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
      ) : ledger.data.entries.length === 0 ? (
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
                  Memo
                </th>
              </tr>
            </thead>
            <tbody className="divide-y divide-line">
              {ledger.data.entries.map((entry) => (
                <tr key={entry.id}>
                  <td className={cx(td, "whitespace-nowrap")}>{formatDateTime(entry.createdAt)}</td>
                  <td className={td}>{entry.kind}</td>
                  <td className={cx(td, "text-right tabular-nums", entry.computeMs < 0 ? "text-danger" : "text-ok")}>{formatMinutes(entry.computeMs)}</td>
                  <td className={cx(td, "text-right tabular-nums")}>{entry.overageMs ? formatMinutes(entry.overageMs) : ""}</td>
                  <td className={cx(td, "text-right tabular-nums")}>{entry.amountCents ? formatPriceCents(entry.amountCents) : ""}</td>
                  <td className={cx(td, "break-all text-ink-muted")}>{entry.memo}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
      <div className="mt-3 flex items-center justify-between text-sm">
        <span className="text-ink-muted">
          {ledger.data ? `${ledger.data.total} entries · page ${page} of ${pages}` : ""}
        </span>
        <span className="flex gap-2">
          <Button variant="ghost" disabled={page <= 1} onClick={() => setPage(page - 1)}>
            Previous
          </Button>
          <Button variant="ghost" disabled={page >= pages} onClick={() => setPage(page + 1)}>
            Next
          </Button>
        </span>
      </div>
    </Card>
  );
}

const minutesOf = (ms: number) => Math.round((ms / 60_000) * 100) / 100;

function UsageCharts({ api, studioId }: { api: string; studioId: string }) {
  const usage = useQuery({ queryKey: ["billing", studioId, "usage"], queryFn: () => apiFetch<Usage>(`${api}/usage?days=30`) });
  if (usage.isPending) return <LoadingRows label="usage" />;
  if (usage.isError) return <Alert>{errorMessage(usage.error)}</Alert>;
  const byDay = usage.data.byDay.map((d) => ({ day: d.day, prepaid: minutesOf(d.usedMs - d.overageMs), overage: minutesOf(d.overageMs) }));
  const bySweep = usage.data.bySweep.slice(0, 10).map((s) => ({ name: s.name, minutes: minutesOf(s.usedMs) }));
  const byMember = usage.data.byMember.map((m) => ({ name: m.email, minutes: minutesOf(m.usedMs) }));
  return (
    <div className="grid grid-cols-1 gap-6 xl:grid-cols-3">
      <Card title="Usage by day (last 30 days, minutes)">
        {byDay.length === 0 ? (
          <EmptyState>No compute used in the last 30 days.</EmptyState>
        ) : (
          <div className="h-64" data-testid="usage-by-day">
            <ResponsiveContainer>
              <BarChart data={byDay}>
                <CartesianGrid strokeDasharray="3 3" />
                <XAxis dataKey="day" fontSize={11} />
                <YAxis fontSize={11} />
                <Tooltip />
                <Bar dataKey="prepaid" stackId="m" fill="#0f6b5c" name="Prepaid" />
                <Bar dataKey="overage" stackId="m" fill="#c2410c" name="Overage" />
              </BarChart>
            </ResponsiveContainer>
          </div>
        )}
      </Card>
      <HorizontalBars title="Usage by sweep (minutes)" data={bySweep} testId="usage-by-sweep" />
      <Card title="Billed per sweep">
        {usage.data.bySweep.length === 0 ? (
          <EmptyState>Nothing yet.</EmptyState>
        ) : (
          <table className="w-full text-sm" data-testid="usage-sweep-table">
            <thead className="border-b border-line">
              <tr>
                <th scope="col" className={th}>
                  Sweep
                </th>
                <th scope="col" className={cx(th, "text-right")}>
                  Billed (ms)
                </th>
                <th scope="col" className={cx(th, "text-right")}>
                  Billed
                </th>
              </tr>
            </thead>
            <tbody className="divide-y divide-line">
              {usage.data.bySweep.map((sweep) => (
                <tr key={sweep.sweepId ?? "none"} data-testid={`usage-sweep-${sweep.sweepId ?? "none"}`}>
                  <td className={td}>{sweep.name}</td>
                  <td className={cx(td, "text-right tabular-nums")} data-testid="usage-sweep-ms">
                    {sweep.usedMs.toLocaleString("en")}
                  </td>
                  <td className={cx(td, "text-right tabular-nums")}>{formatCompute(sweep.usedMs)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
        <p className="mt-3 text-xs text-ink-muted">{METERING_NOTE}</p>
      </Card>
      <HorizontalBars title="Usage by member (minutes)" data={byMember} testId="usage-by-member" />
    </div>
  );
}

function HorizontalBars({ title, data, testId }: { title: string; data: { name: string; minutes: number }[]; testId: string }) {
  return (
    <Card title={title}>
      {data.length === 0 ? (
        <EmptyState>Nothing yet.</EmptyState>
      ) : (
        <div className="h-64" data-testid={testId}>
          <ResponsiveContainer>
            <BarChart data={data} layout="vertical" margin={{ left: 24 }}>
              <CartesianGrid strokeDasharray="3 3" />
              <XAxis type="number" fontSize={11} />
              <YAxis type="category" dataKey="name" width={140} fontSize={11} />
              <Tooltip />
              <Bar dataKey="minutes" fill="#0f6b5c" name="Minutes" />
            </BarChart>
          </ResponsiveContainer>
        </div>
      )}
    </Card>
  );
}
