import "server-only";
import type { DbOrTx } from "@/db/client";
import { ledgerEntries } from "@/db/schema";
import type { LedgerKind } from "./kinds";

/** Minutes a new studio gets so a new user can try a sweep. */
export const WELCOME_GRANT_MS = 30 * 60_000;
/** Minutes the demo seed grants the demo studio. */
export const DEMO_GRANT_MS = 600 * 60_000;

export interface LedgerWrite {
  studioId: string;
  kind: LedgerKind;
  /** Signed: grants and purchases positive, usage negative (integer ms). */
  computeMs: number;
  /** Usage only: compute beyond the prepaid balance, metered and invoiced (integer ms, ≥ 0). */
  overageMs?: number;
  amountCents?: number;
  idempotencyKey: string;
  sweepId?: string | null;
  chunkIndex?: number | null;
  memo?: string;
  /** When the entry happened; default the database's now(). Only the demo seed's past months pass it. */
  at?: Date;
}

/**
 * Appends one entry unless an entry with the same idempotency key exists (then nothing changes).
 * Returns true when this call wrote the entry.
 */
export async function appendLedgerEntry(db: DbOrTx, entry: LedgerWrite): Promise<boolean> {
  if (!Number.isInteger(entry.computeMs)) throw new RangeError(`computeMs must be an integer; got ${entry.computeMs}`);
  if (entry.overageMs !== undefined && !(Number.isInteger(entry.overageMs) && entry.overageMs >= 0)) throw new RangeError(`overageMs must be a non-negative integer; got ${entry.overageMs}`);
  if (entry.amountCents !== undefined && !Number.isInteger(entry.amountCents)) throw new RangeError(`amountCents must be an integer; got ${entry.amountCents}`);
  const inserted = await db
    .insert(ledgerEntries)
    .values({
      studioId: entry.studioId,
      kind: entry.kind,
      computeMs: entry.computeMs,
      overageMs: entry.overageMs ?? 0,
      amountCents: entry.amountCents ?? 0,
      idempotencyKey: entry.idempotencyKey,
      sweepId: entry.sweepId ?? null,
      chunkIndex: entry.chunkIndex ?? null,
      memo: entry.memo ?? "",
      ...(entry.at ? { createdAt: entry.at } : {}),
    })
    .onConflictDoNothing({ target: ledgerEntries.idempotencyKey })
    .returning({ id: ledgerEntries.id });
  return inserted.length > 0;
}

export function welcomeGrant(studioId: string): LedgerWrite {
  return { studioId, kind: "adjustment", computeMs: WELCOME_GRANT_MS, idempotencyKey: `welcome:${studioId}`, memo: "Welcome grant: 30 compute minutes" };
}

export function usageKey(sweepId: string, chunkIndex: number): string {
  return `usage:${sweepId}:${chunkIndex}`;
}

/** The key of a pack purchase's credit: one per Checkout session, however often its events arrive. */
export function purchaseKey(sessionId: string): string {
  return `purchase:${sessionId}`;
}
