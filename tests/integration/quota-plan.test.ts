import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Db } from "@/db/client";
import { ledgerEntries, studioQuotas } from "@/db/schema";
import { appendLedgerEntry } from "@/lib/ledger/ledger";
import { effectiveQuotas, monthOf, PLAN_DEFAULTS } from "@/lib/quotas/plan";
import { monthlyUsageMs } from "@/lib/quotas/standing";
import { closeTestDb, useFreshDb } from "../helpers/db";
import { makeStudio, makeUser } from "../helpers/factories";

let db: Db;
let studioId: string;
beforeAll(async () => {
  db = await useFreshDb();
  studioId = await makeStudio("Quota Plan Test Studio", [{ user: await makeUser(), role: "owner" }]);
});
afterAll(closeTestDb);

describe("plan quotas", () => {
  it("a studio with no overrides has the plan's defaults; an override replaces only its own field", async () => {
    expect(await effectiveQuotas(db, studioId)).toEqual(PLAN_DEFAULTS);
    await db.insert(studioQuotas).values({ studioId, maxRunningSweeps: 1, overageAllowed: true });
    expect(await effectiveQuotas(db, studioId)).toEqual({ ...PLAN_DEFAULTS, maxRunningSweeps: 1, overageAllowed: true });
  });

  it("calendar months are UTC and end exclusive", () => {
    expect(monthOf(new Date("2026-12-31T23:59:59.999Z"))).toEqual({ key: "2026-12", start: new Date("2026-12-01T00:00:00Z"), end: new Date("2027-01-01T00:00:00Z") });
    expect(monthOf(new Date("2027-01-01T00:00:00Z")).key).toBe("2027-01");
  });

  it("monthly usage counts prepaid and overage compute of usage entries in that month only", async () => {
    const at = new Date("2026-11-15T12:00:00Z");
    await db.insert(ledgerEntries).values([
      { studioId, kind: "usage", computeMs: -40_000, overageMs: 0, idempotencyKey: "u:1", createdAt: at },
      { studioId, kind: "usage", computeMs: -1_000, overageMs: 9_000, idempotencyKey: "u:2", createdAt: at },
      { studioId, kind: "purchase", computeMs: 7_200_000, idempotencyKey: "p:1", createdAt: at },
      { studioId, kind: "usage", computeMs: -5_000, idempotencyKey: "u:3", createdAt: new Date("2026-10-31T23:59:59Z") },
    ]);
    expect(await monthlyUsageMs(db, studioId, at)).toBe(40_000 + 1_000 + 9_000);
    expect(await monthlyUsageMs(db, studioId, new Date("2026-10-02T00:00:00Z"))).toBe(5_000);
  });

  it("the ledger refuses a negative or fractional overage", async () => {
    await expect(appendLedgerEntry(db, { studioId, kind: "usage", computeMs: 0, overageMs: -1, idempotencyKey: "bad:1" })).rejects.toThrow(/overageMs/);
    await expect(appendLedgerEntry(db, { studioId, kind: "usage", computeMs: 0, overageMs: 1.5, idempotencyKey: "bad:2" })).rejects.toThrow(/overageMs/);
  });
});
