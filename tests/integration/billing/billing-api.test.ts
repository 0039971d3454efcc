/**
 * The billing read API: the ledger table's filter, sort, paging and CSV; usage breakdowns; an
 * invoice's lines reconciled against the ledger with a difference flagged; the platform view.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Db } from "@/db/client";
import { eq } from "drizzle-orm";
import { invoices, outbox, studioBilling } from "@/db/schema";
import { formatMinutes } from "@/lib/billing/format";
import { recordChunkUsage } from "@/lib/billing/usage";
import { appendLedgerEntry } from "@/lib/ledger/ledger";
import { submitSweep } from "@/lib/queue/submit";
import { studioQuotas } from "@/db/schema";
import { GET as summaryGet } from "@/app/api/v1/studios/[studioId]/billing/route";
import { GET as ledgerGet } from "@/app/api/v1/studios/[studioId]/billing/ledger/route";
import { GET as usageGet } from "@/app/api/v1/studios/[studioId]/billing/usage/route";
import { GET as invoiceGet } from "@/app/api/v1/studios/[studioId]/billing/invoices/[invoiceId]/route";
import { GET as financeGet } from "@/app/api/v1/admin/finance/route";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { makeUser } from "../../helpers/factories";
import { call, errorOf, sessionCookie } from "../../helpers/http";
import { makeSweepStudio, puckSpec, type TestStudio } from "../sweeps/support";

let db: Db;
let s: TestStudio;
let sweepId: string;

beforeAll(async () => {
  db = await useFreshDb();
  s = await makeSweepStudio("Gannet Yard Games", 60 * 60_000);
  sweepId = (await submitSweep(db, s.studioId, { spec: puckSpec() })).id;
  for (let i = 0; i < 3; i++)
    await appendLedgerEntry(db, { studioId: s.studioId, kind: "purchase", computeMs: (i + 1) * 60_000, amountCents: 900 * (i + 1), idempotencyKey: `purchase:cs_test_api_${i}`, memo: `=pack ${i}` });
  await db.insert(studioQuotas).values({ studioId: s.studioId, overageAllowed: true });
  // Spend everything, then two chunks of overage: 1,500 ms and 2,500 ms.
  await db.transaction((tx) => recordChunkUsage(tx, { studioId: s.studioId, sweepId, chunkIndex: 0, computeMs: 66 * 60_000, memo: "chunk 0" }));
  await db.transaction((tx) => recordChunkUsage(tx, { studioId: s.studioId, sweepId, chunkIndex: 1, computeMs: 1_500, memo: "chunk 1" }));
  await db.transaction((tx) => recordChunkUsage(tx, { studioId: s.studioId, sweepId, chunkIndex: 2, computeMs: 2_500, memo: "chunk 2" }));
});
afterAll(closeTestDb);

const get = (handler: unknown, path: string, params: Record<string, string> = { studioId: s.studioId }, cookie = s.cookies.finance) => call(handler, { path, params, cookie });

describe("billing read API", () => {
  it("shows minutes with two decimals", () => {
    // 90,500 ms = 1.508… minutes → "1.51"; 45,000,000 ms = 750 minutes (arithmetic).
    expect(formatMinutes(90_500)).toBe("1.51");
    expect(formatMinutes(45_000_000)).toBe("750.00");
    expect(formatMinutes(-600)).toBe("-0.01");
  });

  it("summarises balance, month and overage", async () => {
    const res = await get(summaryGet, `/api/v1/studios/${s.studioId}/billing`);
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ balanceMs: 0, overage: { allowed: true, thisMonthMs: 4_000 }, month: { usedMs: 66 * 60_000 + 4_000 } });
  });

  it("filters, sorts and pages the ledger, and exports CSV with formulas defused", async () => {
    const base = `/api/v1/studios/${s.studioId}/billing/ledger`;
    const purchases = await get(ledgerGet, `${base}?kind=purchase&sort=computeMs&order=asc&pageSize=2`);
    expect(purchases.status).toBe(200);
    const body = purchases.body as { entries: { computeMs: number }[]; total: number };
    expect(body.total).toBe(3);
    expect(body.entries.map((e) => e.computeMs)).toEqual([60_000, 120_000]);
    const page2 = (await get(ledgerGet, `${base}?kind=purchase&sort=computeMs&order=asc&pageSize=2&page=2`)).body as { entries: { computeMs: number }[] };
    expect(page2.entries.map((e) => e.computeMs)).toEqual([180_000]);
    const tomorrow = new Date(Date.now() + 86_400_000).toISOString().slice(0, 10);
    expect(((await get(ledgerGet, `${base}?from=${tomorrow}`)).body as { total: number }).total).toBe(0);
    const csv = await call(ledgerGet, { path: `${base}?format=csv&kind=purchase`, params: { studioId: s.studioId }, cookie: s.cookies.owner });
    expect(csv.res.headers.get("content-type")).toContain("text/csv");
    const lines = (csv.body as string).trim().split("\r\n");
    // Machine and displayed units both named in the header (lib/ledger/statement.ts).
    expect(lines[0]).toBe("id,created_at,kind,sweep_id,sweep_name,chunk_index,compute_ms,compute_minutes,overage_ms,overage_minutes,amount_cents,amount_usd,memo");
    expect(lines).toHaveLength(4);
    expect(csv.body as string).toContain(`"'=pack 0"`);
  });

  it("refuses bad ledger and usage queries, naming the parameter", async () => {
    const base = `/api/v1/studios/${s.studioId}/billing/ledger`;
    for (const [query, field] of [
      ["sort=price", "sort"],
      ["kind=gift", "kind"],
      ["page=0", "page"],
      ["pageSize=1.5", "pageSize"],
      ["pageSize=500", "pageSize"],
      ["from=yesterday", "from"],
      ["colour=red", "colour"],
    ] as const) {
      const res = await get(ledgerGet, `${base}?${query}`);
      expect(res.status, query).toBe(400);
      expect(errorOf(res.body).field, query).toBe(field);
    }
    const usage = await get(usageGet, `/api/v1/studios/${s.studioId}/billing/usage?days=0`);
    expect(usage.status).toBe(400);
    expect(errorOf(usage.body).field).toBe("days");
  });

  it("breaks usage down by day, sweep and member", async () => {
    const res = await get(usageGet, `/api/v1/studios/${s.studioId}/billing/usage?days=7`);
    const body = res.body as { byDay: { usedMs: number; overageMs: number }[]; bySweep: { sweepId: string; usedMs: number }[] };
    expect(body.byDay.reduce((sum, d) => sum + d.usedMs, 0)).toBe(66 * 60_000 + 4_000);
    expect(body.byDay.reduce((sum, d) => sum + d.overageMs, 0)).toBe(4_000);
    expect(body.bySweep).toEqual([expect.objectContaining({ sweepId, usedMs: 66 * 60_000 + 4_000 })]);
  });

  it("reconciles an invoice line with the ledger and flags a difference", async () => {
    await db.insert(studioBilling).values({ studioId: s.studioId, stripeCustomerId: "cus_api_test" });
    const start = Math.floor(Date.now() / 1000) - 3600;
    const end = Math.floor(Date.now() / 1000) + 60;
    const line = (id: string, quantityMs: number) => ({ id, description: "Overage compute", periodStart: start, periodEnd: end, quantityMs, amountCents: 0 });
    await db.insert(invoices).values([
      { id: "in_api_match", studioId: s.studioId, status: "open", periodStart: new Date(start * 1000), periodEnd: new Date(end * 1000), quantityMs: 4_000, lines: [line("il_1", 4_000)] },
      { id: "in_api_short", studioId: s.studioId, status: "open", periodStart: new Date(start * 1000), periodEnd: new Date(end * 1000), quantityMs: 2_500, lines: [line("il_2", 2_500)] },
    ]);
    const match = (await get(invoiceGet, "/x", { studioId: s.studioId, invoiceId: "in_api_match" })).body as { reconciled: boolean; lines: { ledgerMs: number; entries: unknown[] }[] };
    expect(match.reconciled).toBe(true);
    expect(match.lines[0].ledgerMs).toBe(4_000);
    expect(match.lines[0].entries).toHaveLength(2);
    const short = (await get(invoiceGet, "/x", { studioId: s.studioId, invoiceId: "in_api_short" })).body as { reconciled: boolean; lines: { differenceMs: number }[] };
    expect(short.reconciled).toBe(false);
    // 2,500 invoiced − 4,000 in the ledger = −1,500 ms (arithmetic).
    expect(short.lines[0].differenceMs).toBe(-1_500);
    const other = await get(invoiceGet, "/x", { studioId: s.studioId, invoiceId: "in_nowhere" });
    expect(other.status).toBe(404);

    const admin = await makeUser({ isAdmin: true });
    const finance = await call(financeGet, { path: "/api/v1/admin/finance", cookie: await sessionCookie(admin) });
    const view = finance.body as { periods: { invoiceId: string; ledgerMs: number; meteredMs: number; invoicedMs: number; reconciled: boolean }[]; revenueByMonth: { packCents: number }[] };
    expect(view.periods.find((p) => p.invoiceId === "in_api_short")).toMatchObject({ ledgerMs: 4_000, invoicedMs: 2_500, reconciled: false });
    // Nothing delivered to the meter yet: the matching invoice is not reconciled on the platform view until it is.
    expect(view.periods.find((p) => p.invoiceId === "in_api_match")).toMatchObject({ ledgerMs: 4_000, meteredMs: 0, invoicedMs: 4_000, reconciled: false });
    await db.update(outbox).set({ status: "delivered" }).where(eq(outbox.kind, "stripe.meter_event"));
    const after = (await call(financeGet, { path: "/api/v1/admin/finance", cookie: await sessionCookie(admin) })).body as typeof view;
    expect(after.periods.find((p) => p.invoiceId === "in_api_match")).toMatchObject({ ledgerMs: 4_000, meteredMs: 4_000, invoicedMs: 4_000, reconciled: true });
    // 900 + 1,800 + 2,700 = 5,400 ¢ of packs this month (arithmetic).
    expect(view.revenueByMonth.reduce((sum, m) => sum + m.packCents, 0)).toBe(5_400);
  });
});
