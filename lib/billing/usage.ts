/**
 * Debiting a finished chunk: prepaid minutes first; past the balance, overage (metered to Stripe
 * through the outbox and invoiced monthly) only when an admin allowed it for the studio, clamped to
 * the month's overage cap and compute cap. The queue runner calls recordChunkUsage inside its
 * per-chunk transaction.
 */
import "server-only";
import { eq } from "drizzle-orm";
import type { DbOrTx } from "@/db/client";
import { ledgerEntries, studios } from "@/db/schema";
import { appendLedgerEntry, usageKey } from "@/lib/ledger/ledger";
import { chunkDebit, readStanding } from "@/lib/quotas/standing";
import { queueMail } from "@/lib/outbox/mail";
import { enqueueOutbox } from "@/lib/outbox/outbox";
import { billingContacts } from "./catalog";
import { queueWebhookEvent } from "@/lib/webhooks/webhooks";
import { lowBalanceMail } from "./mail";
import { LOW_BALANCE_MS } from "./packs";

export const METER_EVENT_KIND = "stripe.meter_event";
/** Metadata key of an invoice item (and its line) that bills one chunk's overage late: the chunk's ledger key. */
export const LATE_USAGE_METADATA_KEY = "kd_meter_identifier";
/** Outbox kind that makes a studio's overage subscription once an admin turns overage on. */
export const OVERAGE_SUBSCRIPTION_KIND = "billing.overage_subscription";

export interface MeterEventPayload {
  studioId: string;
  /** Stripe's meter-event identifier: the chunk's ledger key, so a second delivery is not counted. */
  identifier: string;
  /** Overage of the chunk, integer ms. */
  valueMs: number;
  /** When the chunk was debited (unix seconds). */
  timestamp: number;
}

export interface ChunkUsage {
  studioId: string;
  sweepId: string;
  chunkIndex: number;
  /** The chunk's measured compute, integer ms. */
  computeMs: number;
  memo: string;
  /** The time the overdue-invoice grace period is judged at; default the database's now(). */
  at?: Date;
  /**
   * When the chunk was debited: the entry's time, the month its caps and overage count in, and the
   * meter event's time; default now. Only the demo seed passes it (its past months of billing).
   */
  debitedAt?: Date;
  /**
   * False: the entry names the sweep in its key and memo but links to no sweep row, as an entry of
   * a deleted sweep does (the demo seed's past months, whose sweeps the demo does not keep). Default true.
   */
  sweepKept?: boolean;
}

export interface ChunkUsageResult {
  /** False when this chunk was already debited (a retried writer): nothing changed. */
  billed: boolean;
  prepaidMs: number;
  overageMs: number;
}

export async function recordChunkUsage(tx: DbOrTx, usage: ChunkUsage): Promise<ChunkUsageResult> {
  if (!Number.isInteger(usage.computeMs) || usage.computeMs < 0) throw new RangeError(`computeMs must be a non-negative integer; got ${usage.computeMs}`);
  const key = usageKey(usage.sweepId, usage.chunkIndex);
  // One writer per studio at a time: concurrent chunks and purchases never spend the same balance twice.
  const [studio] = await tx.select({ id: studios.id, name: studios.name }).from(studios).where(eq(studios.id, usage.studioId)).for("update");
  if (!studio) throw new Error(`studio ${usage.studioId} does not exist`);
  const [already] = await tx.select({ id: ledgerEntries.id }).from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, key));
  if (already) return { billed: false, prepaidMs: 0, overageMs: 0 };

  const now = usage.debitedAt ?? new Date();
  // Where the studio stands (lib/quotas/standing.ts: the same SQL the queue's recorder reads), the
  // grace period judged at usage.at (default the database's now), and the debit rule applied to it.
  const standing = await readStanding(tx, usage.studioId, now, { graceAt: usage.at ?? null });
  if (!standing) throw new Error(`studio ${usage.studioId} does not exist`);
  const balanceBefore = standing.balanceMs;
  const { prepaidMs, overageMs, unbilledMs: unbilled } = chunkDebit(standing, usage.computeMs);
  const memo = unbilled > 0 ? `${usage.memo}; ${unbilled} ms past the balance or a cap not billed` : usage.memo;
  const billed = await appendLedgerEntry(tx, {
    studioId: usage.studioId,
    kind: "usage",
    computeMs: -prepaidMs,
    overageMs,
    idempotencyKey: key,
    sweepId: usage.sweepKept === false ? null : usage.sweepId,
    chunkIndex: usage.chunkIndex,
    memo,
    ...(usage.debitedAt ? { at: usage.debitedAt } : {}),
  });
  if (!billed) return { billed: false, prepaidMs: 0, overageMs: 0 };
  if (overageMs > 0) {
    // The meter event carries the entry's own time, so invoices and the ledger agree on its period.
    const [entry] = await tx.select({ createdAt: ledgerEntries.createdAt }).from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, key));
    const payload: MeterEventPayload = { studioId: usage.studioId, identifier: key, valueMs: overageMs, timestamp: Math.floor(entry.createdAt.getTime() / 1000) };
    await enqueueOutbox(tx, { kind: METER_EVENT_KIND, idempotencyKey: `meter:${key}`, payload, studioId: usage.studioId });
  }
  const balanceAfter = balanceBefore - prepaidMs;
  if (balanceBefore > LOW_BALANCE_MS && balanceAfter <= LOW_BALANCE_MS) {
    // Once per crossing: the key names the chunk that crossed, so a retried writer queues nothing new.
    for (const to of await billingContacts(tx, usage.studioId)) {
      await queueMail(tx, { idempotencyKey: `mail:low-balance:${key}:${to}`, to, content: lowBalanceMail({ studioId: usage.studioId, studioName: studio.name, balanceMs: balanceAfter }), studioId: usage.studioId });
    }
    // The studio's webhook endpoints hear of it in the same transaction (event id from the same key).
    await queueWebhookEvent(tx, { studioId: usage.studioId, type: "balance.low", subject: key, data: { balanceMs: balanceAfter, lowBalanceMs: LOW_BALANCE_MS, sweepId: usage.sweepId } });
  }
  return { billed: true, prepaidMs, overageMs };
}
