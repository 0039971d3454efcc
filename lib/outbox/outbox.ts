/**
 * The outbox: side effects that leave the process (Stripe meter events, e-mail) are written as
 * rows in the same transaction as the change that causes them, and delivered afterwards by an
 * OutboxDispatcher with retries and back-off. A writer retried after a crash writes nothing new
 * (the idempotency key is unique), and a receiver that knows the key (Stripe's meter-event
 * identifier) ignores a second delivery, so every effect happens once even if Stripe or the SMTP
 * server is down for a while.
 *
 * Delivery holds a short lease on each row instead of a transaction, so a slow receiver never
 * keeps the database locked (PGlite has one connection) and several dispatchers can share one
 * PostgreSQL.
 */
import "server-only";
import { randomBytes } from "node:crypto";
import { and, eq, sql } from "drizzle-orm";
import type { Db, DbOrTx } from "@/db/client";
import { queryRows, sqlNumber } from "@/db/rows";
import { outbox, type OutboxRow } from "@/db/schema";
import { z } from "@/lib/zod";

export interface OutboxMessage {
  kind: string;
  /** Unique per effect, e.g. `meter:{sweepId}:{chunkIndex}` or `mail:alert80:{studioId}:{2026-12}`. */
  idempotencyKey: string;
  payload: unknown;
  studioId?: string | null;
  /** Deliver no earlier than this (default: now). */
  notBefore?: Date;
}

/**
 * Queues one message unless a message with the same key exists. Call it inside the transaction
 * that makes the change. Returns true when this call wrote the row.
 */
export async function enqueueOutbox(db: DbOrTx, message: OutboxMessage): Promise<boolean> {
  const inserted = await db
    .insert(outbox)
    .values({
      kind: message.kind,
      idempotencyKey: message.idempotencyKey,
      payload: message.payload as object,
      studioId: message.studioId ?? null,
      ...(message.notBefore ? { nextAttemptAt: message.notBefore } : {}),
    })
    .onConflictDoNothing({ target: outbox.idempotencyKey })
    .returning({ id: outbox.id });
  return inserted.length > 0;
}

/** A handler that throws this is not retried: the row is marked failed with the message. */
export class PermanentDeliveryError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "PermanentDeliveryError";
  }
}

/** Delivers one message; must be safe to call twice with the same row (use row.idempotencyKey). */
export type OutboxHandler = (row: OutboxRow) => Promise<void>;

/** Waits after the n-th failed attempt (1-based), capped at the last value: nothing is ever dropped for being slow. */
export const OUTBOX_BACKOFF_MS = [1_000, 5_000, 30_000, 120_000, 600_000] as const;

export function backoffMs(attempts: number): number {
  return OUTBOX_BACKOFF_MS[Math.min(Math.max(attempts, 1), OUTBOX_BACKOFF_MS.length) - 1];
}

export interface DispatcherOptions {
  db: Db;
  handlers: Record<string, OutboxHandler>;
  /** Rows taken per pass. */
  batch?: number;
  leaseMs?: number;
  pollMs?: number;
  ownerId?: string;
  /** The clock (tests move it to make retries due). */
  now?: () => Date;
}

export interface DispatchResult {
  delivered: number;
  retried: number;
  failed: number;
}

export class OutboxDispatcher {
  readonly ownerId: string;
  private readonly db: Db;
  private readonly handlers: Record<string, OutboxHandler>;
  private readonly batch: number;
  private readonly leaseMs: number;
  private readonly pollMs: number;
  private readonly now: () => Date;
  private timer: NodeJS.Timeout | null = null;
  private pass: Promise<DispatchResult> | null = null;

  constructor(options: DispatcherOptions) {
    this.db = options.db;
    this.handlers = options.handlers;
    this.batch = options.batch ?? 50;
    this.leaseMs = options.leaseMs ?? 60_000;
    this.pollMs = options.pollMs ?? 1_000;
    this.now = options.now ?? (() => new Date());
    this.ownerId = options.ownerId ?? `outbox_${process.pid}_${randomBytes(6).toString("hex")}`;
  }

  /** Polls in the background until stop(). */
  start(): void {
    if (this.timer) return;
    this.timer = setInterval(() => this.poke(), this.pollMs);
    this.timer.unref?.();
  }

  async stop(): Promise<void> {
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
    await this.pass;
  }

  /** Runs a pass now unless one is running (after a commit that queued something). */
  poke(): void {
    if (this.pass) return;
    this.pass = this.dispatchDue()
      .catch((error: unknown) => {
        console.error("[kickdrift] outbox:", error);
        return { delivered: 0, retried: 0, failed: 0 };
      })
      .finally(() => {
        this.pass = null;
      });
  }

  /** Delivers every due row once (in id order); returns what happened. Tests call it directly. */
  async dispatchDue(): Promise<DispatchResult> {
    const result: DispatchResult = { delivered: 0, retried: 0, failed: 0 };
    for (;;) {
      const rows = await this.claim();
      if (rows.length === 0) return result;
      for (const row of rows) {
        const outcome = await this.deliver(row);
        result[outcome]++;
      }
    }
  }

  private async claim(): Promise<OutboxRow[]> {
    const now = this.now();
    const leaseUntil = new Date(now.getTime() + this.leaseMs);
    const claimed = await queryRows(
      this.db,
      sql`
      update outbox set lease_owner = ${this.ownerId}, lease_expires_at = ${leaseUntil.toISOString()}::timestamptz
      where id in (
        select id from outbox
        where status = 'pending' and next_attempt_at <= ${now.toISOString()}::timestamptz
          and (lease_expires_at is null or lease_expires_at < ${now.toISOString()}::timestamptz)
        order by id
        limit ${this.batch}
        for update skip locked)
      returning id`,
      z.object({ id: sqlNumber }),
    );
    const ids = claimed.map((r) => r.id).sort((a, b) => a - b);
    if (ids.length === 0) return [];
    const rows = await this.db
      .select()
      .from(outbox)
      .where(sql`${outbox.id} in (${sql.join(ids.map((id) => sql`${id}`), sql`, `)})`);
    return rows.sort((a, b) => a.id - b.id);
  }

  private async deliver(row: OutboxRow): Promise<"delivered" | "retried" | "failed"> {
    const mine = and(eq(outbox.id, row.id), eq(outbox.leaseOwner, this.ownerId), eq(outbox.status, "pending"));
    const handler = this.handlers[row.kind];
    try {
      if (!handler) throw new PermanentDeliveryError(`no handler for outbox kind "${row.kind}"`);
      await handler(row);
    } catch (error) {
      const message = error instanceof Error ? error.message : String(error);
      const attempts = row.attempts + 1;
      if (error instanceof PermanentDeliveryError) {
        await this.db.update(outbox).set({ status: "failed", attempts, lastError: message, leaseOwner: null, leaseExpiresAt: null }).where(mine);
        return "failed";
      }
      const next = new Date(this.now().getTime() + backoffMs(attempts));
      await this.db.update(outbox).set({ attempts, lastError: message, nextAttemptAt: next, leaseOwner: null, leaseExpiresAt: null }).where(mine);
      return "retried";
    }
    await this.db
      .update(outbox)
      .set({ status: "delivered", attempts: row.attempts + 1, deliveredAt: this.now(), lastError: null, leaseOwner: null, leaseExpiresAt: null })
      .where(mine);
    return "delivered";
  }
}
