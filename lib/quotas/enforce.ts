/**
 * Quota enforcement: at submit (inside the submit transaction, under a lock on the studio row so
 * two concurrent submits cannot together pass a limit), in the quote (the same limits, before the
 * user submits), and while sweeps run (`applyRunLimits`, called by the queue runner each loop:
 * pause at a chunk boundary with the reason, resume on its own when the cause is gone), plus the
 * 80 % / 100 % monthly-cap alerts.
 *
 * Compute already promised to a studio's unfinished sweeps is "reserved": it counts against the
 * monthly cap and the balance at submit, so a second sweep cannot be admitted on minutes the first
 * one may use. A sweep metered by work units reserves its quote's ceiling, released chunk by chunk
 * as its chunks land (each its share); one metered by wall clock (submitted before work units) its
 * estimate less what it used.
 */
import "server-only";
import { sql } from "drizzle-orm";
import type { Db, DbOrTx } from "@/db/client";
import type { StudioStatus } from "@/db/schema";
import { appBaseUrl } from "@/lib/auth/config";
import { ApiError, LimitError } from "@/lib/errors";
import { layout, type MailContent } from "@/lib/mail/templates";
import { queueMail } from "@/lib/outbox/mail";
import { pokeOutbox } from "@/lib/outbox/process";
import type { Quotas } from "./plan";
import { overageHeadroomMs, readStanding, type Standing } from "./standing";

/** Why a sweep is paused by the limits (shown to the user as the sweep's reason). */
export const RUN_LIMIT_REASONS = {
  suspended: "studio suspended",
  monthlyCap: "monthly compute cap reached",
  outOfMinutes: "out of minutes",
  negativeBalance: "balance below zero after a refund or lost dispute",
} as const;
export type RunLimitReason = (typeof RUN_LIMIT_REASONS)[keyof typeof RUN_LIMIT_REASONS];
const PAUSE_REASONS: readonly string[] = Object.values(RUN_LIMIT_REASONS);

/** The reason a queued sweep shows while its studio already runs as many sweeps as it may. */
export function waitingForSlotReason(maxRunningSweeps: number): string {
  return `waiting: the studio already runs ${maxRunningSweeps} sweep${maxRunningSweeps === 1 ? "" : "s"} at once (its limit)`;
}

function rowsOf<T>(result: unknown): T[] {
  return (result as { rows: T[] }).rows;
}

/** The studio's standing now (or at `at`); not_found when there is no such studio. */
export async function studioStanding(db: DbOrTx, studioId: string, at: Date = new Date()): Promise<Standing> {
  const standing = await readStanding(db, studioId, at);
  if (!standing) throw new ApiError("not_found", "Studio not found.");
  return standing;
}

/** Compute left under the monthly cap once the unfinished sweeps have their share. */
export function monthRemainingMs(s: Standing): number {
  return Math.max(0, s.quotas.monthlyComputeMs - s.monthUsedMs - s.reservedMs);
}

/** Compute the studio can still pay for (balance plus overage headroom) once the unfinished sweeps have their share. */
export function spendableMs(s: Standing): number {
  return Math.max(0, Math.max(0, s.balanceMs) + overageHeadroomMs(s) - s.reservedMs);
}

/** What a sweep asks of the limits. */
export interface SweepDemand {
  cells: number;
  /** The largest integrator step count of any cell. */
  maxCellSteps: number;
  /** The most bodies of any cell's scene. */
  maxCellBodies: number;
  /** The quote's ceiling (ms): what the sweep reserves. */
  ceilingMs: number;
}

export interface LimitViolation {
  code: "quota_exceeded" | "insufficient_minutes" | "studio_suspended";
  name: keyof Quotas | "balance" | "status";
  value: number;
  requested: number;
  remaining: number;
  unit: string;
  field: string;
  message: string;
}

const fmt = (n: number) => n.toLocaleString("en");

/** Every limit the demand breaks, in the order submit reports them (the first is the error). */
export function limitViolations(s: Standing, demand: SweepDemand): LimitViolation[] {
  const out: LimitViolation[] = [];
  const q = s.quotas;
  if (s.studioStatus === "suspended")
    out.push({
      code: "studio_suspended",
      name: "status",
      value: 0,
      requested: 1,
      remaining: 0,
      unit: "sweeps",
      field: "spec",
      message: "The studio is suspended by the platform admins: no new sweeps can start. Members can still read and export results.",
    });
  const perSweep: [keyof Quotas, number, string, string][] = [
    ["maxCellsPerSweep", demand.cells, "cells", "cells per sweep"],
    ["maxStepsPerCell", demand.maxCellSteps, "steps", "integrator steps per cell"],
    ["maxBodies", demand.maxCellBodies, "bodies", "bodies per scene"],
  ];
  for (const [name, requested, unit, label] of perSweep) {
    const value = q[name] as number;
    if (requested > value)
      out.push({
        code: "quota_exceeded",
        name,
        value,
        requested,
        remaining: value,
        unit,
        field: "spec",
        message: `The studio's limit ${name} is ${fmt(value)} ${label}; this sweep asks for ${fmt(requested)}.`,
      });
  }
  if (demand.ceilingMs > 0) {
    const monthLeft = monthRemainingMs(s);
    if (demand.ceilingMs > monthLeft)
      out.push({
        code: "quota_exceeded",
        name: "monthlyComputeMs",
        value: q.monthlyComputeMs,
        requested: demand.ceilingMs,
        remaining: monthLeft,
        unit: "ms",
        field: "spec",
        message: `The studio's monthly compute cap (monthlyComputeMs) is ${fmt(q.monthlyComputeMs)} ms; ${fmt(s.monthUsedMs)} ms are used this month and ${fmt(s.reservedMs)} ms are reserved by unfinished sweeps, so ${fmt(monthLeft)} ms remain; this sweep's quote ceiling is ${fmt(demand.ceilingMs)} ms.`,
      });
    const funds = spendableMs(s);
    if (demand.ceilingMs > funds)
      out.push({
        code: "insufficient_minutes",
        name: "balance",
        value: s.balanceMs,
        requested: demand.ceilingMs,
        remaining: funds,
        unit: "ms",
        field: "spec",
        message: `The sweep's quote ceiling is ${fmt(demand.ceilingMs)} ms of compute; the studio's balance is ${fmt(s.balanceMs)} ms${overageHeadroomMs(s) > 0 ? ` plus ${fmt(overageHeadroomMs(s))} ms of allowed overage` : ""}${s.reservedMs > 0 ? `, of which ${fmt(s.reservedMs)} ms are reserved by unfinished sweeps` : ""}, so ${fmt(funds)} ms remain.`,
      });
  }
  return out;
}

/**
 * The submit check: call inside the submit transaction. Locks the studio row (held until the
 * transaction ends), so a concurrent submit of the same studio waits and then sees this one's
 * sweep among the reservations. Throws the first broken limit.
 */
export async function enforceSubmitLimits(tx: DbOrTx, studioId: string, demand: SweepDemand, at: Date = new Date()): Promise<Standing> {
  const standing = await readStanding(tx, studioId, at, { lock: true });
  if (!standing) throw new ApiError("not_found", "Studio not found.");
  const [first] = limitViolations(standing, demand);
  if (first) {
    const { code, message, field, name, value, requested, remaining, unit } = first;
    throw new LimitError(code, message, { name, value, requested, remaining, unit }, field);
  }
  return standing;
}

/** The limits a quote shows, with what is used and what remains. */
export interface QuoteLimits {
  maxCells: number;
  maxStepsPerCell: number;
  maxBodies: number;
  monthlyComputeMs: number;
  monthUsedMs: number;
  monthReservedMs: number;
  monthRemainingMs: number;
  maxRunningSweeps: number;
  runningSweeps: number;
  overageAllowed: boolean;
  overageCapMs: number;
  overageRemainingMs: number;
  studioStatus: StudioStatus;
  /** What submit would refuse this sweep for now (empty when it would be accepted). */
  violations: Omit<LimitViolation, "status" | "field">[];
}

export async function quoteLimits(db: DbOrTx, studioId: string, demand: SweepDemand): Promise<QuoteLimits> {
  const s = await studioStanding(db, studioId);
  return {
    maxCells: s.quotas.maxCellsPerSweep,
    maxStepsPerCell: s.quotas.maxStepsPerCell,
    maxBodies: s.quotas.maxBodies,
    monthlyComputeMs: s.quotas.monthlyComputeMs,
    monthUsedMs: s.monthUsedMs,
    monthReservedMs: s.reservedMs,
    monthRemainingMs: monthRemainingMs(s),
    maxRunningSweeps: s.quotas.maxRunningSweeps,
    runningSweeps: s.runningSweeps,
    overageAllowed: s.quotas.overageAllowed,
    overageCapMs: s.quotas.overageCapMs,
    overageRemainingMs: overageHeadroomMs(s),
    studioStatus: s.studioStatus,
    violations: limitViolations(s, demand).map(({ code, name, value, requested, remaining, unit, message }) => ({ code, name, value, requested, remaining, unit, message })),
  };
}

/** Why the studio's sweeps may not run now, or null when they may. */
export function runLimitReason(s: Standing): RunLimitReason | null {
  if (s.studioStatus === "suspended") return RUN_LIMIT_REASONS.suspended;
  if (s.monthUsedMs >= s.quotas.monthlyComputeMs) return RUN_LIMIT_REASONS.monthlyCap;
  // Minutes taken back by a refund or a lost dispute are owed first: overage does not run on top of them.
  if (s.balanceMs < 0) return RUN_LIMIT_REASONS.negativeBalance;
  if (s.balanceMs <= 0 && overageHeadroomMs(s) <= 0) return RUN_LIMIT_REASONS.outOfMinutes;
  return null;
}

/**
 * Called by the queue runner each loop, before it claims: for every studio with unfinished
 * sweeps, pauses its queued and running sweeps (no further chunk is claimed; chunks already
 * running land and are kept) when a limit is reached, and resumes sweeps it paused once the
 * cause is gone (a top-up, a quota raise, a lifted suspension, a new month). Queued sweeps that
 * wait for a running slot get a reason saying so. Also sends the monthly-cap alerts.
 */
export async function applyRunLimits(db: Db, at: Date = new Date()): Promise<void> {
  // One statement finds the studios and what each needs: the runner calls this every second while
  // chunks run, and each statement is main-thread work taken from the pool's threads, so the
  // updates below run only where they would change a row (the usual case is none of them).
  const active = rowsOf<{ studio_id: string; limit_paused: boolean; running: number; queued_plain: number; queued_reasons: string[] | null }>(
    await db.execute(sql`
      select studio_id,
        bool_or(status = 'paused') as limit_paused,
        (count(*) filter (where status = 'running'))::int as running,
        (count(*) filter (where status = 'queued' and reason is null))::int as queued_plain,
        array_agg(distinct reason) filter (where status = 'queued' and reason is not null) as queued_reasons
      from sweeps
      where status in ('queued', 'running') or (status = 'paused' and reason in (${sql.join(PAUSE_REASONS.map((r) => sql`${r}`), sql`, `)}))
      group by studio_id`),
  );
  for (const row of active) {
    const studioId = row.studio_id;
    const standing = await readStanding(db, studioId, at);
    if (!standing) continue;
    const reason = runLimitReason(standing);
    if (reason) {
      await db.execute(sql`
        update sweeps set status = 'paused', reason = ${reason}
        where studio_id = ${studioId}
          and (status in ('queued', 'running') or (status = 'paused' and reason <> ${reason} and reason in (${sql.join(PAUSE_REASONS.map((r) => sql`${r}`), sql`, `)})))`);
    } else {
      let running = Number(row.running);
      if (row.limit_paused) {
        await db.execute(sql`
          update sweeps set status = case when started_at is null then 'queued' else 'running' end, reason = null
          where studio_id = ${studioId} and status = 'paused' and reason in (${sql.join(PAUSE_REASONS.map((r) => sql`${r}`), sql`, `)})`);
        running = Number(rowsOf<{ n: string | number }>(await db.execute(sql`select count(*) as n from sweeps where studio_id = ${studioId} and status = 'running'`))[0].n);
      }
      const waiting = waitingForSlotReason(standing.quotas.maxRunningSweeps);
      const reasons = row.queued_reasons ?? [];
      // After a resume the queued sweeps are not those the first statement saw: set their reasons as before.
      if (running >= standing.quotas.maxRunningSweeps) {
        if (row.limit_paused || Number(row.queued_plain) > 0 || reasons.some((r) => r !== waiting))
          await db.execute(sql`update sweeps set reason = ${waiting} where studio_id = ${studioId} and status = 'queued' and reason is distinct from ${waiting}`);
      } else if (row.limit_paused || reasons.length > 0) await db.execute(sql`update sweeps set reason = null where studio_id = ${studioId} and status = 'queued' and reason is not null`);
    }
    await sendCapAlerts(db, studioId, standing);
  }
}

export const CAP_ALERT_THRESHOLDS = [80, 100] as const;

export function capAlertKey(threshold: number, studioId: string, monthKey: string): string {
  return `mail:quota-alert:${threshold}:${studioId}:${monthKey}`;
}

export function capAlertMail(input: { studioName: string; studioId: string; threshold: number; usedMs: number; capMs: number; monthKey: string }): MailContent {
  const minutes = (ms: number) => `${(ms / 60_000).toLocaleString("en", { maximumFractionDigits: 1 })} min`;
  const url = `${appBaseUrl()}/studios/${encodeURIComponent(input.studioId)}`;
  const reached = input.threshold >= 100;
  const subject = reached
    ? `${input.studioName} reached its monthly compute cap`
    : `${input.studioName} has used ${input.threshold}% of its monthly compute cap`;
  const lines = [
    `${input.studioName} has used ${minutes(input.usedMs)} of its ${minutes(input.capMs)} monthly compute cap for ${input.monthKey} (UTC).`,
    reached
      ? "Its sweeps are paused until the next calendar month or until a platform admin raises the cap; finished cells are kept."
      : "When the cap is reached, running sweeps pause at the end of their current chunk.",
  ];
  const footer = "You receive this because you are an owner or finance member of the studio. One message per threshold per month.";
  return { subject, text: `${lines.join("\n\n")}\n\n${url}\n\n${footer}\n`, html: layout(subject, lines, { label: "Open the studio", url }, footer) };
}

/**
 * Queues the 80 % and 100 % alerts the studio's usage has reached this month, once per threshold
 * per month: one message to all owners and finance members under a key per threshold, studio and
 * month, so retries and several runners queue it once.
 */
export async function sendCapAlerts(db: Db, studioId: string, standing?: Standing): Promise<number> {
  const s = standing ?? (await readStanding(db, studioId, new Date()));
  if (!s || s.monthUsedMs <= 0) return 0;
  const due = CAP_ALERT_THRESHOLDS.filter((t) => s.monthUsedMs * 100 >= s.quotas.monthlyComputeMs * t);
  if (due.length === 0) return 0;
  const keys = due.map((t) => capAlertKey(t, studioId, s.monthKey));
  const sent = new Set(
    rowsOf<{ idempotency_key: string }>(
      await db.execute(sql`select idempotency_key from outbox where idempotency_key in (${sql.join(keys.map((k) => sql`${k}`), sql`, `)})`),
    ).map((r) => r.idempotency_key),
  );
  const todo = due.filter((t) => !sent.has(capAlertKey(t, studioId, s.monthKey)));
  if (todo.length === 0) return 0;
  const recipients = rowsOf<{ email: string; name: string }>(
    await db.execute(sql`
      select u.email, st.name from memberships m join users u on u.id = m.user_id join studios st on st.id = m.studio_id
      where m.studio_id = ${studioId} and m.role in ('owner', 'finance') order by u.email`),
  );
  if (recipients.length === 0) return 0;
  let queued = 0;
  await db.transaction(async (tx) => {
    for (const threshold of todo) {
      const content = capAlertMail({ studioName: recipients[0].name, studioId, threshold, usedMs: s.monthUsedMs, capMs: s.quotas.monthlyComputeMs, monthKey: s.monthKey });
      const to = recipients.map((r) => r.email).join(", ");
      if (await queueMail(tx, { idempotencyKey: capAlertKey(threshold, studioId, s.monthKey), to, content, studioId })) queued++;
    }
  });
  if (queued > 0) pokeOutbox();
  return queued;
}
