/**
 * Signed webhooks: studio owners register HTTPS endpoints for event types; events are found and
 * queued away from the queue's path, and delivered through the outbox (lib/outbox) with its
 * retries and backoff, one delivery row per (endpoint, event) as the log.
 *
 * - Sweep and check events are found by `scanWebhookEvents`, which the outbox process runs on a
 *   timer: it reads sweeps that reached done / failed / paused. The queue runner never waits for
 *   it, and never makes an HTTP call: a failing or hanging endpoint cannot slow chunk recording.
 * - `balance.low` is queued in the very transaction that takes the balance under the threshold
 *   (lib/billing/usage.ts), beside the low-balance e-mail.
 *
 * Event ids are derived from what happened (type and subject), so a change found twice is one
 * event, and each delivery row and outbox row is keyed by (endpoint, event): nothing is sent twice
 * unless an owner asks for it ("send again", which sends the same event id).
 */
import "server-only";
import { createHash } from "node:crypto";
import { and, desc, eq, gte, inArray, isNull, or, sql } from "drizzle-orm";
import { z } from "@/lib/zod";
import type { Db, DbOrTx } from "@/db/client";
import { newId } from "@/db/ids";
import {
  catalogueChecks,
  sweeps,
  webhookDeliveries,
  webhookEndpoints,
  webhookEvents,
  WEBHOOK_EVENT_TYPES,
  type OutboxRow,
  type User,
  type WebhookEndpoint,
  type WebhookEventType,
} from "@/db/schema";
import { ApiError } from "@/lib/errors";
import { RUN_LIMIT_REASONS } from "@/lib/quotas/enforce";
import { enqueueOutbox, PermanentDeliveryError } from "@/lib/outbox/outbox";
import { newWebhookSecret, webhookHeaders } from "./signature";

export const WEBHOOK_KIND = "webhook";
/** A receiver gets this long to answer; past it the attempt counts as failed and is retried. */
export const WEBHOOK_TIMEOUT_MS = 10_000;
/** Attempts before a delivery is given up (then "send again" re-queues it). With the outbox backoff, about 1 h 40 min. */
export const WEBHOOK_MAX_ATTEMPTS = 12;
export const MAX_ENDPOINTS_PER_STUDIO = 10;
/** Sweeps that finished longer ago than this are not looked at again by the scan. */
const SCAN_WINDOW_MS = 24 * 60 * 60_000;

// ---------------------------------------------------------------------------
// Endpoints

function localHost(host: string): boolean {
  return host === "localhost" || host === "127.0.0.1" || host === "[::1]";
}

/** https:// anywhere; http:// only to this machine and only outside production (local receivers in development and tests). */
export function endpointUrlProblem(raw: string, production = process.env.NODE_ENV === "production"): string | null {
  let url: URL;
  try {
    url = new URL(raw);
  } catch {
    return `not a URL: "${raw}"`;
  }
  if (url.username || url.password) return "the URL must not carry a user name or password";
  if (url.protocol === "https:") return null;
  if (url.protocol === "http:" && localHost(url.hostname) && !production) return null;
  return production ? "the URL must use https://" : "the URL must use https:// (http:// only for localhost, outside production)";
}

export const createEndpointSchema = z.strictObject({
  url: z
    .string({ error: "url must be a string" })
    .max(2048, { error: "url has at most 2,048 characters" })
    .superRefine((value, context) => {
      const problem = endpointUrlProblem(value);
      if (problem) context.addIssue({ code: "custom", message: problem });
    }),
  events: z
    .array(z.enum(WEBHOOK_EVENT_TYPES, { error: `each event must be one of ${WEBHOOK_EVENT_TYPES.join(", ")}` }), { error: "events must be a list" })
    .min(1, { error: "events must list at least one event type" })
    .refine((list) => new Set(list).size === list.length, { error: "events must not repeat a type" }),
});

export interface EndpointView {
  id: string;
  url: string;
  events: WebhookEventType[];
  createdAt: string;
  /** The last delivery attempts' outcome, for the list. */
  deliveries: { delivered: number; pending: number; failed: number };
}

export async function listEndpoints(db: Db, studioId: string): Promise<EndpointView[]> {
  const rows = await db.select().from(webhookEndpoints).where(and(eq(webhookEndpoints.studioId, studioId), isNull(webhookEndpoints.disabledAt))).orderBy(webhookEndpoints.createdAt);
  if (rows.length === 0) return [];
  const tallies = await db
    .select({ endpointId: webhookDeliveries.endpointId, status: webhookDeliveries.status, n: sql<number>`count(*)::int` })
    .from(webhookDeliveries)
    .where(inArray(webhookDeliveries.endpointId, rows.map((row) => row.id)))
    .groupBy(webhookDeliveries.endpointId, webhookDeliveries.status);
  return rows.map((row) => {
    const deliveries = { delivered: 0, pending: 0, failed: 0 };
    for (const tally of tallies) if (tally.endpointId === row.id) deliveries[tally.status] = Number(tally.n);
    return { id: row.id, url: row.url, events: row.eventTypes as WebhookEventType[], createdAt: row.createdAt.toISOString(), deliveries };
  });
}

/** Registers an endpoint; the secret is answered once, here. */
export async function createEndpoint(db: Db, studioId: string, user: Pick<User, "id">, input: z.infer<typeof createEndpointSchema>): Promise<{ endpoint: EndpointView; secret: string }> {
  const [{ n }] = await db.select({ n: sql<number>`count(*)::int` }).from(webhookEndpoints).where(and(eq(webhookEndpoints.studioId, studioId), isNull(webhookEndpoints.disabledAt)));
  if (Number(n) >= MAX_ENDPOINTS_PER_STUDIO) throw new ApiError("invalid_value", `A studio has at most ${MAX_ENDPOINTS_PER_STUDIO} webhook endpoints; remove one first.`, "url");
  const secret = newWebhookSecret();
  const [row] = await db.insert(webhookEndpoints).values({ id: newId("whk"), studioId, url: input.url, eventTypes: input.events, secret, createdByUserId: user.id }).returning();
  return { endpoint: { id: row.id, url: row.url, events: row.eventTypes as WebhookEventType[], createdAt: row.createdAt.toISOString(), deliveries: { delivered: 0, pending: 0, failed: 0 } }, secret };
}

async function endpointOfStudio(db: DbOrTx, studioId: string, endpointId: string): Promise<WebhookEndpoint> {
  const [row] = await db.select().from(webhookEndpoints).where(and(eq(webhookEndpoints.id, endpointId), eq(webhookEndpoints.studioId, studioId), isNull(webhookEndpoints.disabledAt)));
  if (!row) throw new ApiError("not_found", "Webhook endpoint not found.");
  return row;
}

/** Removes an endpoint: nothing more is sent to it (queued deliveries are dropped by the handler). */
export async function removeEndpoint(db: Db, studioId: string, endpointId: string): Promise<void> {
  await endpointOfStudio(db, studioId, endpointId);
  await db.update(webhookEndpoints).set({ disabledAt: new Date() }).where(eq(webhookEndpoints.id, endpointId));
}

export interface DeliveryView {
  eventId: string;
  type: string;
  status: "pending" | "delivered" | "failed";
  attempts: number;
  lastStatusCode: number | null;
  lastError: string | null;
  resends: number;
  createdAt: string;
  lastAttemptAt: string | null;
  deliveredAt: string | null;
}

export async function listDeliveries(db: Db, studioId: string, endpointId: string, limit = 100): Promise<DeliveryView[]> {
  await endpointOfStudio(db, studioId, endpointId);
  const rows = await db
    .select({ delivery: webhookDeliveries, type: webhookEvents.type })
    .from(webhookDeliveries)
    .innerJoin(webhookEvents, eq(webhookEvents.id, webhookDeliveries.eventId))
    .where(eq(webhookDeliveries.endpointId, endpointId))
    .orderBy(desc(webhookDeliveries.createdAt), desc(webhookDeliveries.eventId))
    .limit(limit);
  return rows.map(({ delivery, type }) => ({
    eventId: delivery.eventId,
    type,
    status: delivery.status,
    attempts: delivery.attempts,
    lastStatusCode: delivery.lastStatusCode,
    lastError: delivery.lastError,
    resends: delivery.resends,
    createdAt: delivery.createdAt.toISOString(),
    lastAttemptAt: delivery.lastAttemptAt?.toISOString() ?? null,
    deliveredAt: delivery.deliveredAt?.toISOString() ?? null,
  }));
}

/** "Send again": queues the same event (same id) to the endpoint once more, whatever the last outcome. */
export async function resendDelivery(db: Db, studioId: string, endpointId: string, eventId: string): Promise<DeliveryView> {
  await endpointOfStudio(db, studioId, endpointId);
  await db.transaction(async (tx) => {
    const [row] = await tx
      .update(webhookDeliveries)
      .set({ status: "pending", resends: sql`${webhookDeliveries.resends} + 1` })
      .where(and(eq(webhookDeliveries.endpointId, endpointId), eq(webhookDeliveries.eventId, eventId)))
      .returning();
    if (!row) throw new ApiError("not_found", "No delivery of that event to this endpoint.");
    await enqueueOutbox(tx, { kind: WEBHOOK_KIND, idempotencyKey: `webhook:${endpointId}:${eventId}:resend:${row.resends}`, payload: { endpointId, eventId }, studioId });
  });
  const [view] = (await listDeliveries(db, studioId, endpointId, 1000)).filter((delivery) => delivery.eventId === eventId);
  return view;
}

// ---------------------------------------------------------------------------
// Events

export function webhookEventId(type: WebhookEventType, subject: string): string {
  return `evt_${createHash("sha256").update(`${type}:${subject}`).digest("base64url").slice(0, 22)}`;
}

/**
 * Records one event and queues a delivery to every endpoint of the studio subscribed to its type,
 * in the caller's transaction. An event already recorded (same type and subject) queues nothing.
 * Returns the event id when it was new.
 */
export async function queueWebhookEvent(tx: DbOrTx, input: { studioId: string; type: WebhookEventType; subject: string; data: unknown; now?: Date }): Promise<string | null> {
  const endpoints = await tx
    .select({ id: webhookEndpoints.id })
    .from(webhookEndpoints)
    .where(and(eq(webhookEndpoints.studioId, input.studioId), isNull(webhookEndpoints.disabledAt), sql`${input.type} = any(${webhookEndpoints.eventTypes})`));
  if (endpoints.length === 0) return null;
  const id = webhookEventId(input.type, input.subject);
  const createdAt = input.now ?? new Date();
  const payload = { id, type: input.type, createdAt: createdAt.toISOString(), studioId: input.studioId, data: input.data };
  const inserted = await tx.insert(webhookEvents).values({ id, studioId: input.studioId, type: input.type, payload, createdAt }).onConflictDoNothing().returning({ id: webhookEvents.id });
  if (inserted.length === 0) return null;
  for (const endpoint of endpoints) {
    await tx.insert(webhookDeliveries).values({ endpointId: endpoint.id, eventId: id }).onConflictDoNothing();
    await enqueueOutbox(tx, { kind: WEBHOOK_KIND, idempotencyKey: `webhook:${endpoint.id}:${id}`, payload: { endpointId: endpoint.id, eventId: id }, studioId: input.studioId });
  }
  return id;
}

/** The reasons a run limit pauses a sweep with (lib/quotas/enforce.ts): the pauses that are sweep.paused events. */
const RUN_LIMIT_PAUSES: ReadonlySet<string> = new Set(Object.values(RUN_LIMIT_REASONS));

/**
 * Finds sweeps of studios with endpoints that reached done, failed or paused, and queues their
 * events (a check's sweep also gives catalogue_check.finished). Reads only; the queue runner is
 * not involved. Returns the ids of the events queued now.
 */
export async function scanWebhookEvents(db: Db, now: Date = new Date()): Promise<string[]> {
  const since = await db
    .select({ studioId: webhookEndpoints.studioId, since: sql<Date>`min(${webhookEndpoints.createdAt})` })
    .from(webhookEndpoints)
    .where(isNull(webhookEndpoints.disabledAt))
    .groupBy(webhookEndpoints.studioId);
  if (since.length === 0) return [];
  const windowStart = new Date(now.getTime() - SCAN_WINDOW_MS);
  const queued: string[] = [];
  for (const studio of since) {
    const from = new Date(Math.max(new Date(studio.since).getTime(), windowStart.getTime()));
    const candidates = await db
      .select({ sweep: sweeps, checkId: catalogueChecks.id, catalogueId: catalogueChecks.catalogueId })
      .from(sweeps)
      .leftJoin(catalogueChecks, eq(catalogueChecks.sweepId, sweeps.id))
      .where(and(eq(sweeps.studioId, studio.studioId), or(and(inArray(sweeps.status, ["done", "failed"]), gte(sweeps.finishedAt, from)), eq(sweeps.status, "paused"))));
    for (const { sweep, checkId, catalogueId } of candidates) {
      const data = {
        sweep: { id: sweep.id, name: sweep.name, status: sweep.status, reason: sweep.reason, cells: sweep.cells, cellsDone: sweep.cellsDone, verdictCounts: sweep.verdictCounts, computeMs: sweep.computeMs, finishedAt: sweep.finishedAt?.toISOString() ?? null },
      };
      const events: { type: WebhookEventType; subject: string; data: unknown }[] = [];
      if (sweep.status === "done") events.push({ type: "sweep.finished", subject: sweep.id, data });
      if (sweep.status === "failed") events.push({ type: "sweep.failed", subject: sweep.id, data });
      // A sweep may pause, resume and pause again: each pause at a new count of done cells is an event.
      // Only a run limit's pause is one (as documented); the demo's paced watch sweep pauses between its steps.
      if (sweep.status === "paused" && RUN_LIMIT_PAUSES.has(sweep.reason ?? "")) events.push({ type: "sweep.paused", subject: `${sweep.id}:${sweep.cellsDone}`, data });
      if (checkId && (sweep.status === "done" || sweep.status === "failed"))
        events.push({ type: "catalogue_check.finished", subject: checkId, data: { check: { id: checkId, catalogueId, sweepId: sweep.id, status: sweep.status, verdictCounts: sweep.verdictCounts } } });
      for (const event of events) {
        const known = await db.select({ id: webhookEvents.id }).from(webhookEvents).where(eq(webhookEvents.id, webhookEventId(event.type, event.subject)));
        if (known.length > 0) continue;
        const id = await db.transaction((tx) => queueWebhookEvent(tx, { studioId: studio.studioId, ...event, now }));
        if (id) queued.push(id);
      }
    }
  }
  return queued;
}

// ---------------------------------------------------------------------------
// Delivery (the outbox handler)

export interface WebhookPayload {
  endpointId: string;
  eventId: string;
}

/**
 * Delivers one event to one endpoint: signed POST with a time limit; any 2xx is delivered. Every
 * attempt is written to the delivery log (status code, error). Throws to let the outbox retry
 * with its backoff; after WEBHOOK_MAX_ATTEMPTS the delivery is failed (send again re-queues it).
 */
export async function deliverWebhook(db: Db, row: OutboxRow, now: () => Date = () => new Date()): Promise<void> {
  const { endpointId, eventId } = row.payload as WebhookPayload;
  const [endpoint] = await db.select().from(webhookEndpoints).where(eq(webhookEndpoints.id, endpointId));
  const [event] = await db.select().from(webhookEvents).where(eq(webhookEvents.id, eventId));
  if (!endpoint || !event) throw new PermanentDeliveryError("the endpoint or the event no longer exists");
  if (endpoint.disabledAt) throw new PermanentDeliveryError("the endpoint was removed");
  const body = JSON.stringify(event.payload);
  const attempts = row.attempts + 1;
  const where = and(eq(webhookDeliveries.endpointId, endpointId), eq(webhookDeliveries.eventId, eventId));
  let statusCode: number | null = null;
  let problem: string | null = null;
  try {
    const res = await fetch(endpoint.url, {
      method: "POST",
      headers: webhookHeaders(endpoint.secret, event.id, Math.floor(now().getTime() / 1000), body),
      body,
      redirect: "manual",
      signal: AbortSignal.timeout(WEBHOOK_TIMEOUT_MS),
    });
    statusCode = res.status;
    await res.body?.cancel().catch(() => undefined);
    if (res.status < 200 || res.status > 299) problem = `the endpoint answered HTTP ${res.status}`;
  } catch (error) {
    const cause = (error as { cause?: { code?: string } }).cause;
    problem = error instanceof Error && error.name === "TimeoutError" ? `no answer within ${WEBHOOK_TIMEOUT_MS} ms` : `could not reach the endpoint${cause?.code ? ` (${cause.code})` : ""}`;
  }
  const at = now();
  if (problem === null) {
    await db.update(webhookDeliveries).set({ status: "delivered", attempts: sql`${webhookDeliveries.attempts} + 1`, lastStatusCode: statusCode, lastError: null, lastAttemptAt: at, deliveredAt: at }).where(where);
    return;
  }
  const givingUp = attempts >= WEBHOOK_MAX_ATTEMPTS;
  await db
    .update(webhookDeliveries)
    .set({ status: givingUp ? "failed" : "pending", attempts: sql`${webhookDeliveries.attempts} + 1`, lastStatusCode: statusCode, lastError: problem, lastAttemptAt: at })
    .where(where);
  if (givingUp) throw new PermanentDeliveryError(`${problem}; gave up after ${attempts} attempts`);
  throw new Error(problem);
}

