import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import { RECONCILIATION_COLUMNS, reconciliationByMonth, reconciliationCsv } from "@/lib/billing/reconciliation-export";

const period = (over: Partial<Parameters<typeof reconciliationByMonth>[0][number]>) => ({
  studioId: "st_a",
  studioName: "Heron Slip Games",
  invoiceId: "in_1",
  number: "KD-0001",
  status: "paid",
  periodStart: "2026-03-01T00:00:00.000Z",
  periodEnd: "2026-04-01T00:00:00.000Z",
  ledgerMs: 600_000,
  meteredMs: 600_000,
  invoicedMs: 600_000,
  totalCents: 90,
  reconciled: true,
  ...over,
});

describe("the reconciliation CSV (Admin → Finance)", () => {
  it("sums each studio's invoices per month of their period, and flags a month whose ledger, meter events and invoices disagree", () => {
    const rows = reconciliationByMonth([
      period({}),
      // A late line billed on April's invoice counts in April, as the invoice does.
      period({ invoiceId: "in_2", number: "KD-0002", periodStart: "2026-04-01T00:00:00.000Z", periodEnd: "2026-05-01T00:00:00.000Z", ledgerMs: 1_080_000, meteredMs: 1_080_000, invoicedMs: 1_080_000, totalCents: 162 }),
      // Another studio, March, with a meter event Stripe never got: 60,000 ms debited but not invoiced.
      period({ studioId: "st_b", studioName: "Avocet Works", invoiceId: "in_3", ledgerMs: 660_000, meteredMs: 600_000, invoicedMs: 600_000, totalCents: 90, reconciled: false }),
    ]);
    expect(rows.map((r) => [r.month, r.studioName, r.ledgerMs, r.meteredMs, r.invoicedMs, r.invoiceCents, r.differenceMs, r.reconciled])).toEqual([
      ["2026-03", "Avocet Works", 660_000, 600_000, 600_000, 90, -60_000, false],
      ["2026-03", "Heron Slip Games", 600_000, 600_000, 600_000, 90, 0, true],
      ["2026-04", "Heron Slip Games", 1_080_000, 1_080_000, 1_080_000, 162, 0, true],
    ]);
  });

  it("two invoices of one studio in one month (the short first period and a re-made subscription) add up", () => {
    const [row] = reconciliationByMonth([period({ periodStart: "2026-03-17T09:00:00.000Z" }), period({ invoiceId: "in_9", ledgerMs: 5, meteredMs: 5, invoicedMs: 5, totalCents: 0 })]);
    expect(row).toMatchObject({ month: "2026-03", invoices: 2, ledgerMs: 600_005, invoicedMs: 600_005, invoiceCents: 90, differenceMs: 0, reconciled: true });
  });

  it("names machine and displayed units in the header and writes both from the integers", () => {
    const csv = reconciliationCsv(reconciliationByMonth([period({ ledgerMs: 90_500, meteredMs: 90_500, invoicedMs: 90_500, totalCents: 1234 })]));
    expect(csv.endsWith("\r\n")).toBe(true);
    const parsed = Papa.parse<Record<string, string>>(csv, { header: true, skipEmptyLines: true });
    expect(parsed.errors).toEqual([]);
    expect(parsed.meta.fields).toEqual([...RECONCILIATION_COLUMNS]);
    // 90,500 ms = 1.508… minutes, shown with two decimals half up as the billing page does (lib/billing/format.ts).
    expect(parsed.data).toEqual([
      {
        month: "2026-03",
        studio_id: "st_a",
        studio_name: "Heron Slip Games",
        invoices: "1",
        ledger_overage_ms: "90500",
        ledger_overage_minutes: "1.51",
        meter_events_ms: "90500",
        meter_events_minutes: "1.51",
        invoice_quantity_ms: "90500",
        invoice_quantity_minutes: "1.51",
        invoice_cents: "1234",
        invoice_usd: "12.34",
        difference_ms: "0",
        reconciled: "true",
      },
    ]);
  });

  it("quotes a studio name that looks like a formula so a spreadsheet does not run it", () => {
    const csv = reconciliationCsv(reconciliationByMonth([period({ studioName: "=HYPERLINK(\"x\")" })]));
    expect(csv.split("\r\n")[1]).toContain(`"'=HYPERLINK(""x"")"`);
  });
});
