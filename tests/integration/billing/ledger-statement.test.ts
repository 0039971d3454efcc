/**
 * The ledger as finance reads it (lib/ledger/statement.ts): one row per sweep instead of one per
 * chunk, the chunks on demand, and exports whose columns name both units. Every figure below is
 * integer arithmetic on the entries this file writes (ms ÷ 60,000 = minutes; cents ÷ 100 = dollars).
 */
import Papa from "papaparse";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Db } from "@/db/client";
import { appendLedgerEntry } from "@/lib/ledger/ledger";
import { balanceMs } from "@/lib/quotas/standing";
import { recordChunkUsage } from "@/lib/billing/usage";
import { submitSweep } from "@/lib/queue/submit";
import { GET as groupsGet } from "@/app/api/v1/studios/[studioId]/billing/ledger/sweeps/route";
import { GET as chunksGet } from "@/app/api/v1/studios/[studioId]/billing/ledger/sweeps/[sweepId]/route";
import { GET as exportGet } from "@/app/api/v1/studios/[studioId]/billing/ledger/export/route";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { call, errorOf } from "../../helpers/http";
import { makeSweepStudio, puckSpec, type TestStudio } from "../sweeps/support";

let db: Db;
let s: TestStudio;
let rival: TestStudio;
let sweepA: string;
let sweepB: string;
let rivalSweep: string;

type Group = { group: string; kind: string; sweepId: string | null; sweepName: string | null; entries: number; chunks: number; computeMs: number; overageMs: number; amountCents: number; memo: string | null };
type GroupsPage = { groups: Group[]; page: number; pageSize: number; total: number };

beforeAll(async () => {
  db = await useFreshDb();
  s = await makeSweepStudio("Gannet Yard Games", 60 * 60_000);
  rival = await makeSweepStudio("Lantern Moth Works", 60 * 60_000);
  sweepA = (await submitSweep(db, s.studioId, { spec: puckSpec(), name: "Crate slide, fine dt" })).id;
  sweepB = (await submitSweep(db, s.studioId, { spec: puckSpec(), name: "Crate slide, coarse dt" })).id;
  rivalSweep = (await submitSweep(db, rival.studioId, { spec: puckSpec(), name: "Moth wings" })).id;
  for (let i = 0; i < 2; i++)
    await appendLedgerEntry(db, { studioId: s.studioId, kind: "purchase", computeMs: 120 * 60_000, amountCents: 900, idempotencyKey: `purchase:cs_test_statement_${i}`, memo: `=pack ${i}` });
  // Sweep A: three chunks (1,000 + 2,000 + 3,000 ms); sweep B: one chunk of 500 ms. All prepaid.
  for (const [chunkIndex, computeMs] of [
    [0, 1_000],
    [1, 2_000],
    [2, 3_000],
  ])
    await db.transaction((tx) => recordChunkUsage(tx, { studioId: s.studioId, sweepId: sweepA, chunkIndex, computeMs, memo: `chunk ${chunkIndex}` }));
  await db.transaction((tx) => recordChunkUsage(tx, { studioId: s.studioId, sweepId: sweepB, chunkIndex: 0, computeMs: 500, memo: "chunk 0" }));
  await db.transaction((tx) => recordChunkUsage(tx, { studioId: rival.studioId, sweepId: rivalSweep, chunkIndex: 0, computeMs: 700, memo: "chunk 0" }));
});
afterAll(closeTestDb);

const base = () => `/api/v1/studios/${s.studioId}/billing/ledger`;
const get = (handler: unknown, path: string, params: Record<string, string> = { studioId: s.studioId }) => call(handler, { path, params, cookie: s.cookies.finance });
const csvRows = (text: string) => Papa.parse<Record<string, string>>(text.trim(), { header: true }).data;

describe("the ledger grouped by sweep", () => {
  it("gives one row per sweep with its chunk count and totals, and every other entry on its own", async () => {
    const res = await get(groupsGet, `${base()}/sweeps`);
    expect(res.status).toBe(200);
    const page = res.body as GroupsPage;
    // The welcome/test grant, two purchases, sweep A, sweep B: 5 rows for 7 entries.
    expect(page.total).toBe(5);
    const a = page.groups.find((g) => g.sweepId === sweepA)!;
    expect(a).toMatchObject({ group: `sweep:${sweepA}`, kind: "usage", sweepName: "Crate slide, fine dt", entries: 3, chunks: 3, computeMs: -6_000, overageMs: 0, memo: null });
    expect(page.groups.find((g) => g.sweepId === sweepB)).toMatchObject({ sweepName: "Crate slide, coarse dt", entries: 1, computeMs: -500 });
    // Nothing lost or counted twice: the groups add up to the balance.
    expect(page.groups.reduce((sum, g) => sum + g.computeMs, 0)).toBe(await balanceMs(db, s.studioId));
    // Another studio's usage never shows.
    expect(page.groups.some((g) => g.sweepId === rivalSweep)).toBe(false);
  });

  it("filters by kind, sorts by a group's total and pages", async () => {
    const usage = (await get(groupsGet, `${base()}/sweeps?kind=usage&sort=computeMs&order=asc`)).body as GroupsPage;
    expect(usage.groups.map((g) => g.sweepId)).toEqual([sweepA, sweepB]);
    const first = (await get(groupsGet, `${base()}/sweeps?pageSize=2`)).body as GroupsPage;
    const second = (await get(groupsGet, `${base()}/sweeps?pageSize=2&page=2`)).body as GroupsPage;
    const third = (await get(groupsGet, `${base()}/sweeps?pageSize=2&page=3`)).body as GroupsPage;
    const seen = [...first.groups, ...second.groups, ...third.groups].map((g) => g.group);
    expect(seen).toHaveLength(5);
    expect(new Set(seen).size).toBe(5);
  });

  it("opens a sweep's row into its chunks, in chunk order; another studio's sweep is not found", async () => {
    const res = await get(chunksGet, `${base()}/sweeps/${sweepA}`, { studioId: s.studioId, sweepId: sweepA });
    expect(res.status).toBe(200);
    const body = res.body as { sweepName: string; chunks: { chunkIndex: number; computeMs: number; memo: string }[] };
    expect(body.sweepName).toBe("Crate slide, fine dt");
    expect(body.chunks.map((c) => [c.chunkIndex, c.computeMs])).toEqual([
      [0, -1_000],
      [1, -2_000],
      [2, -3_000],
    ]);
    const foreign = await get(chunksGet, `${base()}/sweeps/${rivalSweep}`, { studioId: s.studioId, sweepId: rivalSweep });
    expect(foreign.status).toBe(404);
  });

  it("refuses bad queries, naming the parameter", async () => {
    for (const [handler, query, field] of [
      [groupsGet, "/sweeps?sort=price", "sort"],
      [groupsGet, "/sweeps?pageSize=500", "pageSize"],
      [groupsGet, "/sweeps?from=yesterday", "from"],
      [exportGet, "/export?format=xlsx", "format"],
      [exportGet, "/export?group=chunk", "group"],
      [exportGet, "/export?colour=red", "colour"],
    ] as const) {
      const res = await get(handler, `${base()}${query}`);
      expect(res.status, query).toBe(400);
      expect(errorOf(res.body).field, query).toBe(field);
    }
  });
});

describe("ledger exports", () => {
  it("name the machine unit and the displayed unit of every figure in the CSV header, with formulas defused", async () => {
    const res = await get(exportGet, `${base()}/export?format=csv`);
    expect(res.status).toBe(200);
    expect(res.res.headers.get("content-type")).toContain("text/csv");
    expect(res.res.headers.get("content-disposition")).toContain(`ledger-${s.studioId}.csv`);
    const text = res.body as string;
    expect(text.split("\r\n")[0]).toBe("id,created_at,kind,sweep_id,sweep_name,chunk_index,compute_ms,compute_minutes,overage_ms,overage_minutes,amount_cents,amount_usd,memo");
    expect(text).toContain(`"'=pack 0"`);
    const rows = csvRows(text);
    expect(rows).toHaveLength(7);
    // 3,000 ms = 0.05 min; 900 cents = $9.00; 120 min = 7,200,000 ms (arithmetic).
    expect(rows.find((r) => r.sweep_id === sweepA && r.chunk_index === "2")).toMatchObject({ sweep_name: "Crate slide, fine dt", compute_ms: "-3000", compute_minutes: "-0.05", overage_ms: "0", overage_minutes: "0.00" });
    expect(rows.find((r) => r.kind === "purchase")).toMatchObject({ compute_ms: "7200000", compute_minutes: "120.00", amount_cents: "900", amount_usd: "9.00" });
  });

  it("per sweep: one row a sweep whose totals equal the sum of its entries", async () => {
    const entries = csvRows((await get(exportGet, `${base()}/export?format=csv`)).body as string);
    const grouped = csvRows((await get(exportGet, `${base()}/export?format=csv&group=sweep`)).body as string);
    expect(grouped).toHaveLength(5);
    // 6,000 ms = 0.10 min (arithmetic).
    expect(grouped.find((r) => r.sweep_id === sweepA)).toMatchObject({ group: `sweep:${sweepA}`, entries: "3", chunks: "3", compute_ms: "-6000", compute_minutes: "-0.10" });
    const total = (rows: Record<string, string>[]) => rows.reduce((sum, r) => sum + Number(r.compute_ms), 0);
    expect(total(grouped)).toBe(total(entries));
  });

  it("as JSON: the same columns and rows, with each unit described", async () => {
    const res = await get(exportGet, `${base()}/export?format=json&group=sweep&kind=usage`);
    expect(res.res.headers.get("content-type")).toContain("application/json");
    const body = res.body as { columns: string[]; units: Record<string, string>; rows: Record<string, unknown>[] };
    expect(body.columns).toEqual(expect.arrayContaining(["compute_ms", "compute_minutes", "amount_cents", "amount_usd"]));
    expect(Object.keys(body.units).sort()).toEqual(["amount_cents", "amount_usd", "compute_minutes", "compute_ms", "overage_minutes", "overage_ms"]);
    expect(body.units.compute_ms).toContain("milliseconds");
    expect(body.rows.map((r) => [r.sweep_name, r.compute_ms, r.compute_minutes])).toEqual([
      ["Crate slide, fine dt", -6_000, "-0.10"],
      ["Crate slide, coarse dt", -500, "-0.01"],
    ]);
  });
});
