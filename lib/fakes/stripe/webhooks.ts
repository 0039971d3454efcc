import "server-only";
import { createHmac } from "node:crypto";
import type { Delivery, DeliveryAttempt, StripeFakeStore, StripeObject } from "./store";

/**
 * Stripe's webhook signature: header `Stripe-Signature: t=<unix>,v1=<hex HMAC-SHA256(secret, "<t>.<payload>")>`.
 * The timestamp is wall-clock time at sending (not the fake clock), so receivers' tolerance checks pass
 * even after the fake clock has been advanced.
 */
export function signatureHeader(payload: string, secret: string, timestampS: number): string {
  const v1 = createHmac("sha256", secret).update(`${timestampS}.${payload}`, "utf8").digest("hex");
  return `t=${timestampS},v1=${v1}`;
}

/** The exact bytes sent for an event: pretty-printed JSON, as Stripe sends it. */
export function eventPayload(event: StripeObject): string {
  return JSON.stringify(event, null, 2);
}

export interface DispatcherOptions {
  /** Delay before retry n (ms); attempts = delays + 1. Stripe retries for days; tests want milliseconds. */
  retryDelaysMs: number[];
  timeoutMs: number;
  /** Called after any delivery state change so the store can be persisted. */
  onChange(): void;
}

export const DEFAULT_RETRY_DELAYS_MS = [1_000, 2_000, 4_000, 8_000, 16_000, 32_000];

/**
 * Delivers pending webhooks: per endpoint one request at a time in event creation order; a failed
 * delivery is retried with back-off while later events keep flowing (so receivers must tolerate
 * out-of-order arrival, as with Stripe).
 */
export class WebhookDispatcher {
  private timer: NodeJS.Timeout | null = null;
  private running: Promise<void> | null = null;
  private rerun = false;
  private stopped = false;

  constructor(
    private readonly store: StripeFakeStore,
    private readonly options: DispatcherOptions,
  ) {}

  /** Starts a delivery pass soon (coalesces many calls into one pass). */
  kick(): void {
    if (this.stopped) return;
    if (this.running) {
      this.rerun = true;
      return;
    }
    this.running = this.runPasses().finally(() => {
      this.running = null;
      if (this.rerun && !this.stopped) {
        this.rerun = false;
        this.kick();
      } else this.scheduleNext();
    });
  }

  private scheduleNext(): void {
    if (this.timer) clearTimeout(this.timer);
    this.timer = null;
    if (this.stopped) return;
    const pending = this.store.data.deliveries.filter((d) => d.state === "pending" && d.next_attempt_at !== null);
    if (pending.length === 0) return;
    const soonest = Math.min(...pending.map((d) => d.next_attempt_at as number));
    this.timer = setTimeout(() => this.kick(), Math.max(0, soonest - Date.now()));
    this.timer.unref?.();
  }

  private async runPasses(): Promise<void> {
    for (;;) {
      const due = this.store.data.deliveries
        .filter((d) => d.state === "pending" && d.next_attempt_at !== null && d.next_attempt_at <= Date.now())
        .sort((a, b) => a.seq - b.seq);
      if (due.length === 0 || this.stopped) return;
      const byEndpoint = new Map<string, Delivery[]>();
      for (const d of due) byEndpoint.set(d.endpoint, [...(byEndpoint.get(d.endpoint) ?? []), d]);
      await Promise.all(
        [...byEndpoint.values()].map(async (list) => {
          for (const delivery of list) {
            if (this.stopped) return;
            await this.attempt(delivery);
          }
        }),
      );
    }
  }

  private async attempt(delivery: Delivery): Promise<DeliveryAttempt> {
    const endpoint = this.store.get("webhook_endpoints", delivery.endpoint);
    const event = this.store.get("events", delivery.event);
    if (!endpoint || endpoint.deleted || !event) {
      delivery.state = "failed";
      delivery.next_attempt_at = null;
      const gone: DeliveryAttempt = { at: Date.now(), status: null, error: "webhook endpoint or event no longer exists" };
      delivery.attempts.push(gone);
      this.options.onChange();
      return gone;
    }
    const result = await this.send(event, endpoint);
    delivery.attempts.push(result);
    // Look the event up again: the store may have been reloaded while the request was in flight.
    const current = this.store.get("events", delivery.event) ?? event;
    const ok = result.status !== null && result.status >= 200 && result.status < 300;
    if (ok) {
      delivery.state = "succeeded";
      delivery.next_attempt_at = null;
    } else if (delivery.attempts.length > this.options.retryDelaysMs.length) {
      delivery.state = "failed";
      delivery.next_attempt_at = null;
    } else {
      delivery.next_attempt_at = Date.now() + this.options.retryDelaysMs[delivery.attempts.length - 1];
    }
    if (delivery.state !== "pending") {
      current.pending_webhooks = Math.max(0, (current.pending_webhooks as number) - 1);
    }
    this.options.onChange();
    return result;
  }

  /** One signed POST of an event to an endpoint. Never throws: failures become attempts with an error. */
  async send(event: StripeObject, endpoint: StripeObject): Promise<DeliveryAttempt> {
    const payload = eventPayload(event);
    const at = Date.now();
    try {
      const res = await fetch(endpoint.url as string, {
        method: "POST",
        headers: {
          "content-type": "application/json; charset=utf-8",
          "stripe-signature": signatureHeader(payload, endpoint.secret as string, Math.floor(at / 1000)),
          "user-agent": "Stripe/1.0 (+https://stripe.com/docs/webhooks)",
          "cache-control": "no-cache",
          accept: "*/*; q=0.5, application/xml",
        },
        body: payload,
        signal: AbortSignal.timeout(this.options.timeoutMs),
      });
      await res.arrayBuffer().catch(() => undefined);
      return { at, status: res.status };
    } catch (err) {
      return { at, status: null, error: err instanceof Error ? `${err.name}: ${err.message}` : String(err) };
    }
  }

  /** Sends the event again now (one attempt per endpoint, outside the retry schedule). */
  async resend(eventId: string, endpointId?: string): Promise<Array<{ endpoint: string } & DeliveryAttempt>> {
    const event = this.store.get("events", eventId);
    if (!event) throw new Error(`No such event: '${eventId}'`);
    const endpoints = this.endpointsFor(event, endpointId);
    const results = [];
    for (const endpoint of endpoints) {
      const attempt = await this.send(event, endpoint);
      this.store.data.deliveries.push({
        id: `whdel_resend_${this.store.nextSeq()}`,
        event: event.id,
        endpoint: endpoint.id,
        seq: this.store.nextSeq(),
        state: attempt.status !== null && attempt.status >= 200 && attempt.status < 300 ? "succeeded" : "failed",
        attempts: [attempt],
        next_attempt_at: null,
      });
      results.push({ endpoint: endpoint.id, ...attempt });
    }
    this.options.onChange();
    return results;
  }

  /** Delivers the given events in exactly the given order, one attempt each, awaiting each answer. */
  async deliverInOrder(eventIds: string[], endpointId?: string): Promise<Array<{ event: string; endpoint: string } & DeliveryAttempt>> {
    const results = [];
    for (const id of eventIds) {
      for (const r of await this.resend(id, endpointId)) results.push({ event: id, ...r });
    }
    return results;
  }

  /** Sends the given events all at once (one attempt each), so the receiver handles them concurrently. */
  async deliverConcurrently(eventIds: string[], endpointId?: string): Promise<Array<{ event: string; endpoint: string } & DeliveryAttempt>> {
    const all = await Promise.all(eventIds.map(async (id) => (await this.resend(id, endpointId)).map((r) => ({ event: id, ...r }))));
    return all.flat();
  }

  private endpointsFor(event: StripeObject, endpointId?: string): StripeObject[] {
    if (endpointId) {
      const ep = this.store.get("webhook_endpoints", endpointId);
      if (!ep || ep.deleted) throw new Error(`No such webhook endpoint: '${endpointId}'`);
      return [ep];
    }
    return this.store
      .newestFirst("webhook_endpoints")
      .reverse()
      .filter((we) => !we.deleted && we.status === "enabled" && ((we.enabled_events as string[]).includes("*") || (we.enabled_events as string[]).includes(event.type as string)));
  }

  /** Resolves once nothing is due or in flight (pending retries scheduled later do not count unless `includeRetries`). */
  async idle(opts: { includeRetries?: boolean; timeoutMs?: number } = {}): Promise<void> {
    const deadline = Date.now() + (opts.timeoutMs ?? 10_000);
    for (;;) {
      const pending = this.store.data.deliveries.filter(
        (d) => d.state === "pending" && (opts.includeRetries || (d.next_attempt_at ?? Infinity) <= Date.now()),
      );
      if (pending.length === 0 && !this.running) return;
      if (Date.now() > deadline) throw new Error(`webhook deliveries still pending after ${opts.timeoutMs ?? 10_000} ms`);
      if (this.running) await this.running;
      else await new Promise((r) => setTimeout(r, 10));
    }
  }

  async stop(): Promise<void> {
    this.stopped = true;
    if (this.timer) clearTimeout(this.timer);
    if (this.running) await this.running;
  }
}
