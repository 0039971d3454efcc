/**
 * Admin → Finance's reconciliation as CSV, one row per studio and calendar month (UTC) of the
 * invoice periods: the overage the ledger debited, the overage delivered to Stripe as meter events
 * (late usage on its late line), and what the invoices bill, in milliseconds and cents. Every
 * quantity has a machine column (integer ms, integer cents) and a displayed one (minutes, dollars),
 * as the ledger exports do. Overage subscriptions are anchored to the 1st, so an invoice period is
 * a calendar month (the first one a part of one) and the month is the period's start.
 */
import "server-only";
import { z } from "@/lib/zod";
import { csvCell } from "@/lib/csv";
import { dollarsText, minutesText } from "@/lib/ledger/statement";
import type { platformFinance } from "./queries";

export const financeQuerySchema = z.object({ format: z.enum(["json", "csv"]).default("json") }).strict();

type Period = Awaited<ReturnType<typeof platformFinance>>["periods"][number];

export const RECONCILIATION_COLUMNS = [
  "month",
  "studio_id",
  "studio_name",
  "invoices",
  "ledger_overage_ms",
  "ledger_overage_minutes",
  "meter_events_ms",
  "meter_events_minutes",
  "invoice_quantity_ms",
  "invoice_quantity_minutes",
  "invoice_cents",
  "invoice_usd",
  "difference_ms",
  "reconciled",
] as const;

export interface ReconciliationMonth {
  month: string;
  studioId: string;
  studioName: string;
  invoices: number;
  ledgerMs: number;
  meteredMs: number;
  invoicedMs: number;
  invoiceCents: number;
  /** Invoiced less debited: what the invoices bill beyond (or short of) the ledger. */
  differenceMs: number;
  /** Every invoice of the month reconciled line by line, and ledger = meter events = invoice quantity. */
  reconciled: boolean;
}

/** The periods of platformFinance summed per studio and month, oldest month first, then by studio name. */
export function reconciliationByMonth(periods: readonly Period[]): ReconciliationMonth[] {
  const byKey = new Map<string, ReconciliationMonth>();
  for (const p of periods) {
    const month = p.periodStart.slice(0, 7);
    const key = `${month}\u0000${p.studioId}`;
    const row = byKey.get(key) ?? { month, studioId: p.studioId, studioName: p.studioName, invoices: 0, ledgerMs: 0, meteredMs: 0, invoicedMs: 0, invoiceCents: 0, differenceMs: 0, reconciled: true };
    row.invoices += 1;
    row.ledgerMs += p.ledgerMs;
    row.meteredMs += p.meteredMs;
    row.invoicedMs += p.invoicedMs;
    row.invoiceCents += p.totalCents;
    row.reconciled &&= p.reconciled;
    byKey.set(key, row);
  }
  const rows = [...byKey.values()];
  for (const r of rows) {
    r.differenceMs = r.invoicedMs - r.ledgerMs;
    r.reconciled &&= r.ledgerMs === r.meteredMs && r.meteredMs === r.invoicedMs;
  }
  return rows.sort((a, b) => a.month.localeCompare(b.month) || a.studioName.localeCompare(b.studioName) || a.studioId.localeCompare(b.studioId));
}

export function reconciliationCsv(rows: readonly ReconciliationMonth[]): string {
  const lines = rows.map((r) =>
    [
      r.month,
      r.studioId,
      r.studioName,
      r.invoices,
      r.ledgerMs,
      minutesText(r.ledgerMs),
      r.meteredMs,
      minutesText(r.meteredMs),
      r.invoicedMs,
      minutesText(r.invoicedMs),
      r.invoiceCents,
      dollarsText(r.invoiceCents),
      r.differenceMs,
      r.reconciled ? "true" : "false",
    ]
      .map(csvCell)
      .join(","),
  );
  return [RECONCILIATION_COLUMNS.join(","), ...lines].join("\r\n") + "\r\n";
}
