/**
 * What platform admins do to a studio: edit its quotas, grant or revoke compute minutes, suspend
 * it and lift the suspension, and change platform roles. Each change and its audit record are
 * written in one transaction; the studio row is locked so concurrent edits serialise.
 */
import "server-only";
import { randomBytes } from "node:crypto";
import { and, asc, desc, eq, inArray, sql } from "drizzle-orm";
import { z } from "@/lib/zod";
import type { Db } from "@/db/client";
import { queryRows, sqlDate, sqlNumber } from "@/db/rows";
import { ledgerEntries, memberships, studioQuotas, studios, sweeps, users, type LedgerEntry, type StudioStatus, type User } from "@/db/schema";
import { writeAudit } from "@/lib/audit/audit";
import { ApiError } from "@/lib/errors";
import { appendLedgerEntry } from "@/lib/ledger/ledger";
import { formatCompute } from "@/lib/billing/format";
import { pokeOutbox } from "@/lib/outbox/process";
import { queueOverageSubscription } from "@/lib/billing/overage-switch";
import { queueStudioStatusMail } from "@/lib/studios/suspension";
import { PLAN_DEFAULTS, storedOverage, type Quotas } from "./plan";
import { RUN_LIMIT_REASONS, monthRemainingMs, studioStanding } from "./enforce";
import { overageHeadroomMs, type Standing } from "./standing";

type Actor = Pick<User, "id" | "email">;

/** Largest value of an integer quota (ms quotas: about 11.6 days of compute per month … 2^53 would be silly). */
const MAX_MS = 1_000_000 * 60_000;
const intQuota = (name: string, min: number, max: number) =>
  z
    .number({ error: `${name} must be an integer from ${min} to ${max}, or null for the plan default` })
    .int({ error: `${name} must be an integer from ${min} to ${max}, or null for the plan default` })
    .min(min, { error: `${name} must be ≥ ${min}` })
    .max(max, { error: `${name} must be ≤ ${max}` })
    .nullable()
    .optional();

/** A partial edit: a field left out keeps its override; null returns it to the plan default. */
export const quotaPatchSchema = z
  .strictObject({
    monthlyComputeMs: intQuota("monthlyComputeMs", 0, MAX_MS),
    maxRunningSweeps: intQuota("maxRunningSweeps", 1, 100),
    maxCellsPerSweep: intQuota("maxCellsPerSweep", 1, PLAN_DEFAULTS.maxCellsPerSweep),
    maxStepsPerCell: intQuota("maxStepsPerCell", 1, PLAN_DEFAULTS.maxStepsPerCell),
    maxBodies: intQuota("maxBodies", 2, PLAN_DEFAULTS.maxBodies),
    overageAllowed: z.boolean({ error: "overageAllowed must be true, false or null" }).nullable().optional(),
    overageCapMs: intQuota("overageCapMs", 0, MAX_MS),
    reason: z.string({ error: "reason is required" }).trim().min(1, { error: "reason is required: write why, it is kept in the audit log" }).max(500, { error: "reason must be at most 500 characters" }),
  })
  .refine((v) => Object.keys(v).some((k) => k !== "reason"), { error: "Give at least one quota to change." });

// overageOn is the owner's switch (lib/billing/overage-switch.ts), not an admin override.
type Overrides = Omit<typeof studioQuotas.$inferSelect, "studioId" | "updatedAt" | "updatedByUserId" | "overageOn">;
const QUOTA_KEYS = ["monthlyComputeMs", "maxRunningSweeps", "maxCellsPerSweep", "maxStepsPerCell", "maxBodies", "overageAllowed", "overageCapMs"] as const satisfies readonly (keyof Quotas)[];

async function lockStudio(tx: Parameters<Parameters<Db["transaction"]>[0]>[0], studioId: string) {
  const [studio] = await tx.select().from(studios).where(eq(studios.id, studioId)).for("update");
  if (!studio) throw new ApiError("not_found", "Studio not found.");
  return studio;
}

function overridesOf(row: typeof studioQuotas.$inferSelect | undefined): Overrides {
  return Object.fromEntries(QUOTA_KEYS.map((k) => [k, row?.[k] ?? null])) as Overrides;
}

export interface QuotaView {
  /** The studio's overrides (null = the plan default). */
  overrides: Overrides;
  effective: Quotas;
  defaults: Quotas;
}

export async function studioQuotaView(db: Db, studioId: string): Promise<QuotaView> {
  const [row] = await db.select().from(studioQuotas).where(eq(studioQuotas.studioId, studioId));
  const overrides = overridesOf(row);
  const effective = { ...PLAN_DEFAULTS } as Quotas;
  for (const k of QUOTA_KEYS) if (overrides[k] !== null) (effective as unknown as Record<string, unknown>)[k] = overrides[k];
  return { overrides, effective, defaults: { ...PLAN_DEFAULTS } };
}

export async function updateQuotas(db: Db, actor: Actor, studioId: string, patch: z.infer<typeof quotaPatchSchema>): Promise<QuotaView> {
  await db.transaction(async (tx) => {
    await lockStudio(tx, studioId);
    const [row] = await tx.select().from(studioQuotas).where(eq(studioQuotas.studioId, studioId)).for("update");
    const before = overridesOf(row);
    const after = { ...before };
    for (const k of QUOTA_KEYS) if (patch[k] !== undefined) (after as Record<string, unknown>)[k] = patch[k];
    const changed = QUOTA_KEYS.filter((k) => before[k] !== after[k]);
    if (changed.length === 0) return;
    const values = { ...after, updatedAt: new Date(), updatedByUserId: actor.id };
    await tx.insert(studioQuotas).values({ studioId, ...values }).onConflictDoUpdate({ target: studioQuotas.studioId, set: values });
    if (storedOverage(after.overageAllowed, row?.overageOn).both && !storedOverage(before.overageAllowed, null).permitted) {
      // Overage permitted, and the owner has not switched it off: the studio's overage subscription
      // (anchored to the 1st) is made now. An owner who has it off makes it by switching it on.
      await queueOverageSubscription(tx, studioId);
    }
    await writeAudit(tx, {
      actor,
      studioId,
      action: "quota.update",
      subjectType: "studio",
      subjectId: studioId,
      before: Object.fromEntries(changed.map((k) => [k, before[k]])),
      after: Object.fromEntries(changed.map((k) => [k, after[k]])),
      reason: patch.reason,
    });
  });
  pokeOutbox();
  return studioQuotaView(db, studioId);
}

export const adjustmentSchema = z.strictObject({
  computeMs: z
    .number({ error: "computeMs must be a non-zero integer number of milliseconds (positive grants, negative revokes)" })
    .int({ error: "computeMs must be a non-zero integer number of milliseconds (positive grants, negative revokes)" })
    .min(-MAX_MS, { error: `computeMs must be ≥ ${-MAX_MS}` })
    .max(MAX_MS, { error: `computeMs must be ≤ ${MAX_MS}` })
    .refine((v) => v !== 0, { error: "computeMs must not be 0" }),
  reason: z.string({ error: "reason is required" }).trim().min(1, { error: "reason is required" }).max(500, { error: "reason must be at most 500 characters" }),
  /** Sent again with a retried request, the adjustment is written once. */
  idempotencyKey: z
    .string({ error: "idempotencyKey must be a string" })
    .regex(/^[A-Za-z0-9_.:-]{8,100}$/, { error: "idempotencyKey must be 8 to 100 characters of letters, digits, _ . : -" })
    .optional(),
});

export interface AdjustmentView {
  id: number;
  computeMs: number;
  memo: string;
  createdAt: string;
}

function adjustmentView(e: LedgerEntry): AdjustmentView {
  return { id: e.id, computeMs: e.computeMs, memo: e.memo, createdAt: e.createdAt.toISOString() };
}

/**
 * Grants (positive) or revokes (negative) compute minutes as a ledger adjustment. A revoke cannot
 * take the balance below zero. Idempotent on the key: a retry returns the first adjustment.
 */
export async function adjustCredit(
  db: Db,
  actor: Actor,
  studioId: string,
  input: z.infer<typeof adjustmentSchema>,
): Promise<{ adjustment: AdjustmentView; created: boolean; balanceMs: number }> {
  const key = `adjust:${studioId}:${input.idempotencyKey ?? randomBytes(12).toString("base64url")}`;
  let created = false;
  await db.transaction(async (tx) => {
    await lockStudio(tx, studioId);
    const [existing] = await tx.select().from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, key));
    if (existing) return;
    const [{ total }] = await tx
      .select({ total: sql<string>`coalesce(sum(${ledgerEntries.computeMs}), 0)` })
      .from(ledgerEntries)
      .where(eq(ledgerEntries.studioId, studioId));
    const balance = Number(total);
    if (input.computeMs < 0 && balance + input.computeMs < 0)
      throw new ApiError("invalid_value",
        // In minutes, the unit the admin screen takes and shows; the field stays the API's computeMs.
        `computeMs: cannot revoke ${formatCompute(-input.computeMs)}; the studio's balance is ${formatCompute(balance)}.`,
        "computeMs",
      );
    created = await appendLedgerEntry(tx, {
      studioId,
      kind: "adjustment",
      computeMs: input.computeMs,
      idempotencyKey: key,
      memo: `${input.computeMs > 0 ? "Grant" : "Revoke"} by ${actor.email}: ${input.reason}`,
    });
    if (created)
      await writeAudit(tx, {
        actor,
        studioId,
        action: "credit.adjust",
        subjectType: "studio",
        subjectId: studioId,
        before: { balanceMs: balance },
        after: { balanceMs: balance + input.computeMs, computeMs: input.computeMs },
        reason: input.reason,
      });
  });
  const [entry] = await db.select().from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, key));
  if (entry.studioId !== studioId) throw new ApiError("not_found", "Studio not found.");
  const standing = await studioStanding(db, studioId);
  return { adjustment: adjustmentView(entry), created, balanceMs: standing.balanceMs };
}

export async function listAdjustments(db: Db, studioId: string, limit = 50): Promise<AdjustmentView[]> {
  const rows = await db
    .select()
    .from(ledgerEntries)
    .where(and(eq(ledgerEntries.studioId, studioId), eq(ledgerEntries.kind, "adjustment")))
    .orderBy(desc(ledgerEntries.createdAt), desc(ledgerEntries.id))
    .limit(limit);
  return rows.map(adjustmentView);
}

export const statusChangeSchema = z.strictObject({
  status: z.enum(["active", "suspended"], { error: 'status must be "active" or "suspended"' }),
  reason: z.string({ error: "reason is required" }).trim().min(1, { error: "reason is required" }).max(500, { error: "reason must be at most 500 characters" }),
});

/**
 * Suspends a studio (its queued and running sweeps pause at once with "studio suspended"; submits
 * are refused) or lifts the suspension (the runner resumes what the suspension paused).
 */
export async function setStudioStatus(db: Db, actor: Actor, studioId: string, input: z.infer<typeof statusChangeSchema>): Promise<StudioStatus> {
  let mailed = 0;
  await db.transaction(async (tx) => {
    const studio = await lockStudio(tx, studioId);
    if (studio.status === input.status) return;
    await tx.update(studios).set({ status: input.status }).where(eq(studios.id, studioId));
    if (input.status === "suspended")
      await tx
        .update(sweeps)
        .set({ status: "paused", reason: RUN_LIMIT_REASONS.suspended })
        .where(and(eq(sweeps.studioId, studioId), inArray(sweeps.status, ["queued", "running"])));
    await writeAudit(tx, {
      actor,
      studioId,
      action: input.status === "suspended" ? "studio.suspend" : "studio.reinstate",
      subjectType: "studio",
      subjectId: studioId,
      before: { status: studio.status },
      after: { status: input.status },
      reason: input.reason,
    });
    // Members hear of it by e-mail (the banner on their pages says the same).
    mailed = await queueStudioStatusMail(tx, studio, input.status, input.reason);
  });
  if (mailed > 0) pokeOutbox();
  return input.status;
}

export const platformRoleSchema = z.strictObject({
  isAdmin: z.boolean({ error: "isAdmin must be true or false" }),
  reason: z.string({ error: "reason is required" }).trim().min(1, { error: "reason is required: write why, it is kept in the audit log" }).max(500, { error: "reason must be at most 500 characters" }),
});

/** Grants or removes the platform admin role; an admin cannot remove their own (so one always remains who can act). */
export async function setPlatformRole(db: Db, actor: Actor, userId: string, input: z.infer<typeof platformRoleSchema>): Promise<{ id: string; email: string; isAdmin: boolean }> {
  return db.transaction(async (tx) => {
    const [user] = await tx.select().from(users).where(eq(users.id, userId)).for("update");
    if (!user) throw new ApiError("not_found", "User not found.");
    if (user.id === actor.id && !input.isAdmin) throw new ApiError("invalid_state", "You cannot remove your own admin role; ask another admin.", "isAdmin");
    if (user.isAdmin !== input.isAdmin) {
      await tx.update(users).set({ isAdmin: input.isAdmin }).where(eq(users.id, userId));
      await writeAudit(tx, {
        actor,
        studioId: null,
        action: "user.platform_role",
        subjectType: "user",
        subjectId: userId,
        before: { isAdmin: user.isAdmin },
        after: { isAdmin: input.isAdmin },
        reason: input.reason,
      });
    }
    return { id: user.id, email: user.email, isAdmin: input.isAdmin };
  });
}

export interface StudioUsageView {
  id: string;
  name: string;
  status: StudioStatus;
  createdAt: string;
  memberCount: number;
  balanceMs: number;
  monthUsedMs: number;
  monthlyComputeMs: number;
  /** Used / cap in whole percent (may pass 100 by at most a chunk's worth). */
  monthUsedPercent: number;
  monthRemainingMs: number;
  overageRemainingMs: number;
  runningSweeps: number;
  queuedSweeps: number;
  pausedSweeps: number;
}

function usageView(studio: typeof studios.$inferSelect, memberCount: number, s: Standing, queued: number, paused: number): StudioUsageView {
  return {
    id: studio.id,
    name: studio.name,
    status: studio.status,
    createdAt: studio.createdAt.toISOString(),
    memberCount,
    balanceMs: s.balanceMs,
    monthUsedMs: s.monthUsedMs,
    monthlyComputeMs: s.quotas.monthlyComputeMs,
    monthUsedPercent: s.quotas.monthlyComputeMs > 0 ? Math.floor((s.monthUsedMs * 100) / s.quotas.monthlyComputeMs) : s.monthUsedMs > 0 ? 100 : 0,
    monthRemainingMs: monthRemainingMs(s),
    overageRemainingMs: overageHeadroomMs(s),
    runningSweeps: s.runningSweeps,
    queuedSweeps: queued,
    pausedSweeps: paused,
  };
}

/** Every studio with this month's usage against its cap, balance, sweeps and status. */
export async function adminStudioList(db: Db): Promise<StudioUsageView[]> {
  const rows = await db.select().from(studios).orderBy(asc(studios.createdAt), asc(studios.id));
  const members = new Map(
    (await db.select({ studioId: memberships.studioId, n: sql<number>`count(*)::int` }).from(memberships).groupBy(memberships.studioId)).map((r) => [r.studioId, Number(r.n)]),
  );
  const counts = new Map<string, { queued: number; paused: number }>();
  for (const r of await db
    .select({ studioId: sweeps.studioId, status: sweeps.status, n: sql<number>`count(*)::int` })
    .from(sweeps)
    .where(inArray(sweeps.status, ["queued", "paused"]))
    .groupBy(sweeps.studioId, sweeps.status)) {
    const c = counts.get(r.studioId) ?? { queued: 0, paused: 0 };
    c[r.status as "queued" | "paused"] = Number(r.n);
    counts.set(r.studioId, c);
  }
  const out: StudioUsageView[] = [];
  const now = new Date();
  for (const studio of rows) {
    const c = counts.get(studio.id) ?? { queued: 0, paused: 0 };
    out.push(usageView(studio, members.get(studio.id) ?? 0, await studioStanding(db, studio.id, now), c.queued, c.paused));
  }
  return out;
}

export async function adminStudioDetail(db: Db, studioId: string) {
  const [studio] = await db.select().from(studios).where(eq(studios.id, studioId));
  if (!studio) throw new ApiError("not_found", "Studio not found.");
  const members = await db
    .select({ userId: users.id, email: users.email, name: users.name, role: memberships.role, joinedAt: memberships.joinedAt })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.studioId, studioId))
    .orderBy(asc(memberships.joinedAt), asc(users.email));
  const [{ queued }] = await db.select({ queued: sql<number>`count(*)::int` }).from(sweeps).where(and(eq(sweeps.studioId, studioId), eq(sweeps.status, "queued")));
  const [{ paused }] = await db.select({ paused: sql<number>`count(*)::int` }).from(sweeps).where(and(eq(sweeps.studioId, studioId), eq(sweeps.status, "paused")));
  return {
    studio: usageView(studio, members.length, await studioStanding(db, studioId), Number(queued), Number(paused)),
    quotas: await studioQuotaView(db, studioId),
    members: members.map((m) => ({ ...m, joinedAt: m.joinedAt.toISOString() })),
    adjustments: await listAdjustments(db, studioId),
  };
}

export interface QueueEntryView {
  sweepId: string;
  sweepName: string;
  studioId: string;
  studioName: string;
  status: string;
  reason: string | null;
  chunks: number;
  chunksDone: number;
  chunksRunning: number;
  estimatedComputeMs: number;
  computeMs: number;
  /** The quote's ceiling (0 for sweeps metered by wall clock). */
  ceilingMs: number;
  /** Worker wall time of the chunks landed so far (capacity; not billed). */
  wallMs: number;
  createdAt: string;
}

const queueEntryRow = z.object({
  id: z.string(),
  name: z.string(),
  studio_id: z.string(),
  studio_name: z.string(),
  status: z.string(),
  reason: z.string().nullable(),
  chunks: sqlNumber,
  chunks_done: sqlNumber,
  chunks_running: sqlNumber,
  estimated_compute_ms: sqlNumber,
  compute_ms: sqlNumber,
  ceiling_ms: sqlNumber,
  wall_ms: sqlNumber,
  created_at: sqlDate,
});

/** Unfinished sweeps of every studio, oldest first: what runs (and waits) for whom. */
export async function adminQueue(db: Db): Promise<QueueEntryView[]> {
  const rows = await queryRows(
    db,
    sql`
    select s.id, s.name, s.studio_id, st.name as studio_name, s.status, s.reason, s.chunks, s.chunks_done,
      (select count(*) from sweep_chunks c where c.sweep_id = s.id and c.status = 'running') as chunks_running,
      s.estimated_compute_ms, s.compute_ms, s.ceiling_ms,
      (select coalesce(sum(c.wall_ms), 0) from sweep_chunks c where c.sweep_id = s.id and c.status = 'done') as wall_ms, s.created_at
    from sweeps s join studios st on st.id = s.studio_id
    where s.status in ('queued', 'running', 'paused')
    order by s.created_at, s.id`,
    queueEntryRow,
  );
  return rows.map((r) => ({
    sweepId: r.id,
    sweepName: r.name,
    studioId: r.studio_id,
    studioName: r.studio_name,
    status: r.status,
    reason: r.reason,
    chunks: r.chunks,
    chunksDone: r.chunks_done,
    chunksRunning: r.chunks_running,
    estimatedComputeMs: r.estimated_compute_ms,
    computeMs: r.compute_ms,
    ceilingMs: r.ceiling_ms,
    wallMs: r.wall_ms,
    createdAt: r.created_at.toISOString(),
  }));
}
