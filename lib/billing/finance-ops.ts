/**
 * What an admin does about money that did not add up: meter events the outbox gave up on (shown in
 * Admin → Finance, retried as they were or re-keyed under a new Stripe identifier, audited), and the
 * scheduled reconciliation of ledger, meter and invoices that e-mails the admins on any difference.
 */
import "server-only";
import { createHash } from "node:crypto";
import { and, asc, eq, sql } from "drizzle-orm";
import type { Db, DbOrTx } from "@/db/client";
import { outbox, studios, users, type User } from "@/db/schema";
import { writeAudit } from "@/lib/audit/audit";
import { appBaseUrl } from "@/lib/auth/config";
import { ApiError, notFound } from "@/lib/errors";
import type { MailContent } from "@/lib/mail/templates";
import { queueMail } from "@/lib/outbox/mail";
import { enqueueOutbox } from "@/lib/outbox/outbox";
import { pokeOutbox, registerOutboxHandler } from "@/lib/outbox/process";
import { z } from "@/lib/zod";
import { platformFinance } from "./queries";
import { METER_EVENT_KIND, type MeterEventPayload } from "./usage";

export interface FailedMeterEvent {
  outboxId: number;
  studioId: string | null;
  studioName: string | null;
  identifier: string;
  /** The identifier Stripe is sent, when an admin re-keyed it. */
  meterIdentifier: string | null;
  valueMs: number;
  timestamp: number;
  attempts: number;
  lastError: string | null;
  createdAt: string;
}

/** Meter events the outbox marked failed for good (Stripe refused them), oldest first. */
export async function failedMeterEvents(db: DbOrTx): Promise<FailedMeterEvent[]> {
  const rows = await db
    .select({ row: outbox, studioName: studios.name })
    .from(outbox)
    .leftJoin(studios, eq(studios.id, outbox.studioId))
    .where(and(eq(outbox.kind, METER_EVENT_KIND), eq(outbox.status, "failed")))
    .orderBy(asc(outbox.id));
  return rows.map(({ row, studioName }) => {
    const p = row.payload as Partial<MeterEventPayload> & { meterIdentifier?: string };
    return {
      outboxId: row.id,
      studioId: row.studioId,
      studioName,
      identifier: String(p.identifier ?? ""),
      meterIdentifier: p.meterIdentifier ?? null,
      valueMs: Number(p.valueMs ?? 0),
      timestamp: Number(p.timestamp ?? 0),
      attempts: row.attempts,
      lastError: row.lastError,
      createdAt: row.createdAt.toISOString(),
    };
  });
}

export const meterRetrySchema = z
  .object({
    /** Send under a new Stripe identifier (when Stripe holds the old one for something else); the ledger key stays. */
    rekey: z.boolean().default(false),
    reason: z.string().trim().min(3, "must say why (at least 3 characters)").max(500, "must be at most 500 characters"),
  })
  .strict();
export type MeterRetryInput = z.infer<typeof meterRetrySchema>;

export interface MeterRetryResult {
  outboxId: number;
  /** queued: this call put it back in the outbox; unchanged: it was not failed (already queued or delivered), nothing done. */
  state: "queued" | "unchanged";
  status: string;
  meterIdentifier: string;
}

/**
 * Puts a failed meter event back in the outbox, as it was or under a new Stripe identifier. One
 * conditional update (status failed → pending): a second click, or two admins at once, queue it once
 * and write one audit row.
 */
export async function retryMeterEvent(db: Db, actor: Pick<User, "id" | "email">, outboxId: number, input: MeterRetryInput): Promise<MeterRetryResult> {
  return db.transaction(async (tx) => {
    const [row] = await tx.select().from(outbox).where(and(eq(outbox.id, outboxId), eq(outbox.kind, METER_EVENT_KIND))).for("update");
    if (!row) throw notFound("Meter event");
    const payload = row.payload as MeterEventPayload & { meterIdentifier?: string; rekeys?: number };
    const currentId = payload.meterIdentifier ?? payload.identifier;
    if (row.status !== "failed") return { outboxId, state: "unchanged", status: row.status, meterIdentifier: currentId };
    if (typeof payload.identifier !== "string") throw new ApiError("invalid_value", "outboxId: this outbox row carries no meter-event identifier; it cannot be retried.", "outboxId");
    const rekeys = (payload.rekeys ?? 0) + (input.rekey ? 1 : 0);
    // Stripe's identifier is at most 100 characters; the suffix keeps each re-key distinct and traceable to the ledger key.
    const meterIdentifier = input.rekey ? `${payload.identifier.slice(0, 90)}~r${rekeys}` : currentId;
    const nextPayload = { ...payload, rekeys, ...(meterIdentifier !== payload.identifier ? { meterIdentifier } : {}) };
    await tx
      .update(outbox)
      .set({ status: "pending", payload: nextPayload, attempts: 0, nextAttemptAt: sql`now()`, lastError: null, leaseOwner: null, leaseExpiresAt: null })
      .where(and(eq(outbox.id, outboxId), eq(outbox.status, "failed")));
    await writeAudit(tx, {
      actor,
      studioId: row.studioId,
      action: input.rekey ? "meter_event.rekey" : "meter_event.retry",
      subjectType: "meter_event",
      subjectId: payload.identifier,
      before: { status: row.status, meterIdentifier: currentId, attempts: row.attempts, lastError: row.lastError },
      after: { status: "pending", meterIdentifier },
      reason: input.reason,
    });
    return { outboxId, state: "queued", status: "pending", meterIdentifier };
  });
}

/** Admin → Finance: the platform's money view and the meter events waiting for an admin. */
export async function financeView(db: DbOrTx) {
  return { ...(await platformFinance(db)), failedMeterEvents: await failedMeterEvents(db) };
}

// ---------------------------------------------------------------- scheduled reconciliation

export const FINANCE_RECONCILE_KIND = "billing.reconcile_finance";
/** Hourly: often enough that a difference is seen the day it appears, cheap (one pass over the invoices mirror). */
export const FINANCE_RECONCILE_EVERY_MS = 60 * 60_000;

export interface FinanceReconciliation {
  periodsChecked: number;
  /** Invoiced periods where ledger, meter and invoice lines do not agree. */
  differences: Array<{ studioName: string; invoice: string; ledgerMs: number; meteredMs: number; invoicedMs: number }>;
  failedMeterEvents: number;
  /** Admins mailed by this pass (0 when nothing differs, or the same differences were already reported). */
  alerted: number;
}

function alertMail(result: FinanceReconciliation): MailContent {
  const lines = [
    ...result.differences.map((d) => `${d.studioName}, invoice ${d.invoice}: ledger ${d.ledgerMs} ms, delivered to meter ${d.meteredMs} ms, invoiced ${d.invoicedMs} ms.`),
    ...(result.failedMeterEvents > 0 ? [`${result.failedMeterEvents} meter event(s) failed for good and wait for an admin to retry or re-key them.`] : []),
  ];
  const url = `${appBaseUrl()}/admin/finance`;
  const subject = `Kickdrift finance: ${result.differences.length} period(s) differ, ${result.failedMeterEvents} failed meter event(s)`;
  return {
    subject,
    text: `${lines.join("\n")}\n\nOpen Admin → Finance: ${url}\n`,
    html: `<!doctype html><html><body style="font-family:system-ui,sans-serif"><h1 style="font-size:18px">${subject}</h1>${lines.map((l) => `<p>${l.replaceAll("&", "&amp;").replaceAll("<", "&lt;")}</p>`).join("")}<p><a href="${url}">Open Admin → Finance</a></p></body></html>`,
  };
}

/**
 * One pass: every invoiced period and the failed meter events. Admins are mailed when anything
 * differs, keyed by what differs, so the same differences are reported once, not every hour.
 */
export async function reconcileFinance(db: Db): Promise<FinanceReconciliation> {
  const finance = await platformFinance(db);
  const failed = await failedMeterEvents(db);
  const result: FinanceReconciliation = {
    periodsChecked: finance.periods.length,
    differences: finance.periods.filter((p) => !p.reconciled).map((p) => ({ studioName: p.studioName, invoice: p.number ?? p.invoiceId, ledgerMs: p.ledgerMs, meteredMs: p.meteredMs, invoicedMs: p.invoicedMs })),
    failedMeterEvents: failed.length,
    alerted: 0,
  };
  if (result.differences.length === 0 && failed.length === 0) return result;
  const fingerprint = JSON.stringify([result.differences, failed.map((f) => f.outboxId)]);
  const digest = createHash("sha256").update(fingerprint).digest("hex").slice(0, 24);
  const admins = await db.select({ email: users.email }).from(users).where(eq(users.isAdmin, true));
  for (const { email } of admins) {
    if (await queueMail(db, { idempotencyKey: `mail:finance-difference:${digest}:${email}`, to: email, content: alertMail(result) })) result.alerted++;
  }
  if (result.alerted > 0) pokeOutbox();
  return result;
}

function slotKey(at: Date): string {
  return `reconcile:finance:${new Date(Math.floor(at.getTime() / FINANCE_RECONCILE_EVERY_MS) * FINANCE_RECONCILE_EVERY_MS).toISOString()}`;
}

/** Queues the pass of the slot after `now` (idempotent per slot, so several processes queue it once). */
export async function scheduleFinanceReconcile(db: Db, now: Date): Promise<void> {
  const next = new Date((Math.floor(now.getTime() / FINANCE_RECONCILE_EVERY_MS) + 1) * FINANCE_RECONCILE_EVERY_MS);
  await enqueueOutbox(db, { kind: FINANCE_RECONCILE_KIND, idempotencyKey: slotKey(next), payload: { slot: next.toISOString() }, notBefore: next });
}

export async function runScheduledFinanceReconcile(db: Db, now: Date): Promise<FinanceReconciliation> {
  const result = await reconcileFinance(db);
  if (result.differences.length + result.failedMeterEvents > 0) console.warn(`[billing] finance reconcile: ${result.differences.length} period(s) differ, ${result.failedMeterEvents} failed meter event(s)`);
  await scheduleFinanceReconcile(db, now);
  return result;
}

/** Registers the pass with the process's outbox and queues the next one (lib/billing/startup.ts). */
export async function startFinanceReconcile(db: Db): Promise<void> {
  registerOutboxHandler(FINANCE_RECONCILE_KIND, async () => {
    await runScheduledFinanceReconcile(db, new Date());
  });
  await scheduleFinanceReconcile(db, new Date());
}
