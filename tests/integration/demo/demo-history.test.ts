/**
 * The demo seed's three past months of billing, made through the local Stripe fake and the app's
 * own billing paths: per month, the ledger's overage = the meter events Stripe holds = the overage
 * invoice's line, to the millisecond and the cent; finance's Invoices API lists the three months;
 * the months net to zero minutes, so the balance is the grant. The months are the three before the
 * month of today (whatever today is), on the fake's clock started in the past.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq, sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { invoices, ledgerEntries, outbox, users } from "@/db/schema";
import { DEMO_ACCOUNTS, seedDemo } from "@/server/seed";
import { reconcileFinance } from "@/lib/billing/finance-ops";
import { registerMeterEventHandler } from "@/lib/billing/meter";
import { OVERAGE_UNIT_AMOUNT_DECIMAL } from "@/lib/billing/packs";
import { METER_EVENT_KIND } from "@/lib/billing/usage";
import { historyMonths } from "@/lib/demo/history";
import { DEMO_GRANT_MS } from "@/lib/ledger/ledger";
import { balanceMs } from "@/lib/quotas/standing";
import { monthOf } from "@/lib/quotas/plan";
import { GET as invoicesGet } from "@/app/api/v1/studios/[studioId]/billing/invoices/route";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { call, sessionCookie } from "../../helpers/http";
import { startBillingHarness, type BillingHarness } from "../billing/support";

let db: Db;
let h: BillingHarness;
let studioId: string;
let months: { start: Date; end: Date; key: string }[];

beforeAll(async () => {
  process.env.KICKDRIFT_RUNNER = "off";
  db = await useFreshDb();
  h = await startBillingHarness();
  registerMeterEventHandler(db);
  const started = performance.now();
  ({ studioId } = await seedDemo(db));
  // A figure for the closing note, not an assertion (speed is measured, never asserted).
  console.log(`[demo history] seed with three months of billing: ${(performance.now() - started).toFixed(0)} ms`);
  months = historyMonths(new Date()).map((start) => monthOf(start));
}, 120_000);

afterAll(async () => {
  await h?.close();
  await closeTestDb();
});

const sumOf = async (column: "overageMs" | "computeMs" | "amountCents", kind: "usage" | "purchase", start: Date, end: Date) => {
  const [row] = await db
    .select({ total: sql<string>`coalesce(sum(${ledgerEntries[column]}), 0)` })
    .from(ledgerEntries)
    .where(and(eq(ledgerEntries.studioId, studioId), eq(ledgerEntries.kind, kind), sql`${ledgerEntries.createdAt} >= ${start.toISOString()}::timestamptz`, sql`${ledgerEntries.createdAt} < ${end.toISOString()}::timestamptz`));
  return Number(row.total);
};

describe("the demo's three past months of billing", () => {
  it("reconciles per month: ledger overage = Stripe's meter events = the invoice line, to the ms and the cent", async () => {
    const overage = await db.select().from(invoices).where(and(eq(invoices.studioId, studioId), eq(invoices.kind, "overage")));
    const customer = (await h.stripe.customers.list({ limit: 100 })).data.find((c) => c.metadata?.studio_id === studioId)!;
    expect(customer).toBeDefined();
    const perMonth = [];
    for (const m of months) {
      const ledgerMs = await sumOf("overageMs", "usage", m.start, m.end);
      // The meter events as the fake recorded them, by their own timestamps.
      const meteredMs = h.fake.store.data.meter_events
        .filter((e) => e.customer === customer.id && e.timestamp >= m.start.getTime() / 1000 && e.timestamp < m.end.getTime() / 1000)
        .reduce((sum, e) => sum + Number(e.value), 0);
      // The overage invoice of the period that ends at the month's end (the first one starts on the 2nd, when overage was turned on).
      const mine = overage.filter((i) => i.periodEnd.getTime() === m.end.getTime());
      expect(mine.length, m.key).toBe(1);
      const stripeInvoice = await h.stripe.invoices.retrieve(mine[0].id);
      const stripeLines = (await h.stripe.invoices.listLineItems(mine[0].id, { limit: 100 })).data;
      const invoicedMs = stripeLines.reduce((sum, l) => sum + Number(l.quantity_decimal ?? l.quantity ?? 0), 0);
      expect(meteredMs, m.key).toBe(ledgerMs);
      expect(invoicedMs, m.key).toBe(ledgerMs);
      expect(mine[0].quantityMs, m.key).toBe(ledgerMs);
      // Cents: the fake's line amount is the ms × 0.00015 ¢ (the overage price, lib/billing/packs.ts) rounded once.
      expect(stripeInvoice.total, m.key).toBe(Math.round(ledgerMs * Number(OVERAGE_UNIT_AMOUNT_DECIMAL)));
      expect(mine[0].totalCents, m.key).toBe(stripeInvoice.total);
      expect(mine[0].status, m.key).toBe("paid");
      perMonth.push({ ledgerMs, cents: mine[0].totalCents });
    }
    // The plan (lib/demo/history.ts): overage only in the second month, 80 minutes = 4,800,000 ms →
    // 4,800,000 × 0.00015 ¢ = 720 ¢ (arithmetic).
    expect(perMonth).toEqual([
      { ledgerMs: 0, cents: 0 },
      { ledgerMs: 4_800_000, cents: 720 },
      { ledgerMs: 0, cents: 0 },
    ]);
    // Every meter event delivered once, none failed; the scheduled reconciliation finds nothing to report.
    const meterRows = await db.select({ status: outbox.status }).from(outbox).where(and(eq(outbox.studioId, studioId), eq(outbox.kind, METER_EVENT_KIND)));
    expect(meterRows.length).toBe(8);
    expect(meterRows.every((r) => r.status === "delivered")).toBe(true);
    expect(await reconcileFinance(db)).toMatchObject({ differences: [], failedMeterEvents: 0 });
  });

  it("dates the purchases and usage in their months, and leaves the balance at the grant", async () => {
    // Rebound = 750 min (45,000,000 ms) for 4,500 ¢ (pack table, lib/billing/packs.ts), in months 1 and 3.
    const purchased = await Promise.all(months.map((m) => sumOf("amountCents", "purchase", m.start, m.end)));
    expect(purchased).toEqual([4_500, 0, 4_500]);
    // Used (prepaid + overage): 20 × 30 min, 23 × 10 min, 25 × 30 min (lib/demo/history.ts).
    const used = await Promise.all(months.map(async (m) => (await sumOf("overageMs", "usage", m.start, m.end)) - (await sumOf("computeMs", "usage", m.start, m.end))));
    expect(used).toEqual([36_000_000, 13_800_000, 45_000_000]);
    // Nothing else was computed (no queue runner here): the balance is the demo's grant.
    expect(await balanceMs(db, studioId)).toBe(DEMO_GRANT_MS);
    // The fake's clock is back in the present.
    expect(Math.abs(h.fake.now() - Date.now() / 1000)).toBeLessThan(600);
  });

  it("lists the three months' invoices on finance's Invoices API, packs and overage", async () => {
    const finance = DEMO_ACCOUNTS.find((a) => a.role === "finance")!;
    const [user] = await db.select().from(users).where(eq(users.email, finance.email));
    const res = await call(invoicesGet, { method: "GET", path: `/api/v1/studios/${studioId}/billing/invoices`, params: { studioId }, cookie: await sessionCookie(user) });
    expect(res.status).toBe(200);
    const list = (res.body as { invoices: { kind: string; periodEnd: string; totalCents: number; status: string }[] }).invoices;
    const overage = list.filter((i) => i.kind === "overage").map((i) => [i.periodEnd, i.totalCents]);
    expect(overage).toEqual(months.map((m, n) => [m.end.toISOString(), n === 1 ? 720 : 0]).reverse());
    const packs = list.filter((i) => i.kind === "pack");
    expect(packs.map((i) => [i.totalCents, i.status])).toEqual([
      [4_500, "paid"],
      [4_500, "paid"],
    ]);
  });

  it("adds nothing when seeded again", async () => {
    const [before] = await db.select({ n: sql<string>`count(*)` }).from(ledgerEntries);
    const invoicesBefore = (await h.stripe.invoices.list({ limit: 100 })).data.length;
    await seedDemo(db);
    const [after] = await db.select({ n: sql<string>`count(*)` }).from(ledgerEntries);
    expect(Number(after.n)).toBe(Number(before.n));
    expect((await h.stripe.invoices.list({ limit: 100 })).data.length).toBe(invoicesBefore);
  });
});
