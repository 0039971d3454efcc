import "server-only";
import { randomBytes } from "node:crypto";
import { mkdirSync, readFileSync, renameSync, writeFileSync, existsSync } from "node:fs";
import { dirname } from "node:path";

/** A Stripe object as sent on the wire. */
export type StripeObject = Record<string, unknown> & { id: string; object: string };

export type CollectionName =
  | "customers"
  | "products"
  | "prices"
  | "checkout_sessions"
  | "payment_intents"
  | "payment_methods"
  | "meters"
  | "subscriptions"
  | "invoices"
  | "events"
  | "webhook_endpoints"
  | "charges"
  | "refunds"
  | "disputes"
  | "invoiceitems";

export const COLLECTIONS: readonly CollectionName[] = [
  "customers",
  "products",
  "prices",
  "checkout_sessions",
  "payment_intents",
  "payment_methods",
  "meters",
  "subscriptions",
  "invoices",
  "events",
  "webhook_endpoints",
  "charges",
  "refunds",
  "disputes",
  "invoiceitems",
];

export interface RecordedMeterEvent {
  object: "billing.meter_event";
  created: number;
  event_name: string;
  identifier: string;
  livemode: false;
  payload: Record<string, string>;
  timestamp: number;
  /** Resolved at intake so aggregation does not depend on later meter edits. */
  meter: string;
  customer: string;
  value: string;
}

export interface DeliveryAttempt {
  at: number; // unix ms, wall clock
  status: number | null; // HTTP status, null when the receiver could not be reached
  error?: string;
}

export interface Delivery {
  id: string;
  event: string;
  endpoint: string;
  seq: number;
  state: "pending" | "succeeded" | "failed";
  attempts: DeliveryAttempt[];
  next_attempt_at: number | null; // unix ms, wall clock
}

export interface StoreSnapshot {
  json: string;
  events: number;
  meterEvents: number;
  deliveries: number;
}

export interface IdempotencyRecord {
  fingerprint: string;
  status: number;
  body: string;
  created: number;
  /** The request that produced the saved answer (sent back as `original-request` on replays). */
  request_id: string;
}

export interface FakeStateData {
  version: 1;
  /** Fake clock: seconds added to the wall clock, only ever moved forward. */
  clock_offset_s: number;
  seq: number;
  collections: Record<CollectionName, Record<string, StripeObject>>;
  session_line_items: Record<string, StripeObject[]>;
  /** payment_intent_data given at session creation, applied when the payment intent is made. */
  session_intent_data: Record<string, { metadata: Record<string, string>; description: string | null }>;
  session_payment_intents: Record<string, string>;
  /** Processing bank debits (payment intent id → test account number) until settleDelayedPayments. */
  delayed_payments?: Record<string, string>;
  meter_events: RecordedMeterEvent[];
  deliveries: Delivery[];
  idempotency: Record<string, IdempotencyRecord>;
  /** Object id → creation sequence, for a stable newest-first order within one second. */
  order: Record<string, number>;
}

function emptyState(): FakeStateData {
  const collections = {} as Record<CollectionName, Record<string, StripeObject>>;
  for (const name of COLLECTIONS) collections[name] = {};
  return {
    version: 1,
    clock_offset_s: 0,
    seq: 0,
    collections,
    session_line_items: {},
    session_intent_data: {},
    session_payment_intents: {},
    meter_events: [],
    deliveries: [],
    idempotency: {},
    order: {},
  };
}

const ID_ALPHABET = "0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz";

/** Stripe-style id: prefix + 24 base62 characters. */
export function newId(prefix: string, length = 24): string {
  const bytes = randomBytes(length);
  let out = "";
  for (let i = 0; i < length; i++) out += ID_ALPHABET[bytes[i] % ID_ALPHABET.length];
  return `${prefix}_${out}`;
}

/**
 * All fake Stripe state, in memory, optionally mirrored to a JSON file after every change so a
 * restarted app (and fake) finds its customers, sessions, meter events and pending webhooks again.
 */
export class StripeFakeStore {
  data: FakeStateData;
  readonly filePath: string | undefined;
  /** Identifiers of recorded meter events, for the de-duplication check (derived, not persisted). */
  readonly meterIdentifiers = new Set<string>();

  constructor(filePath?: string) {
    this.filePath = filePath;
    this.data = emptyState();
    if (filePath && existsSync(filePath)) {
      let parsed: FakeStateData;
      try {
        parsed = JSON.parse(readFileSync(filePath, "utf8")) as FakeStateData;
      } catch (err) {
        throw new Error(`Stripe fake state file ${filePath} is not valid JSON (${err instanceof Error ? err.message : String(err)}); move it away to start empty.`);
      }
      if (parsed.version !== 1) throw new Error(`Unsupported Stripe fake state version in ${filePath}: ${String(parsed.version)}`);
      const base = emptyState();
      this.data = { ...base, ...parsed, collections: { ...base.collections, ...parsed.collections } };
    }
    for (const e of this.data.meter_events) this.meterIdentifiers.add(e.identifier);
  }

  /** Current fake time in unix seconds. */
  now(): number {
    return Math.floor(Date.now() / 1000) + this.data.clock_offset_s;
  }

  /**
   * Starts the clock at `unixSeconds`, which may be in the past, while the store holds no customer:
   * nothing billed exists yet that a clock moved back could date out of order (the catalog's
   * products, prices and meter carry no period). From there it only moves forward again. The demo
   * seed uses it to make three past months of billing through the ordinary API.
   */
  startClockAt(unixSeconds: number): void {
    if (!Number.isSafeInteger(unixSeconds)) throw new Error(`the clock start must be a unix time in seconds; got ${unixSeconds}`);
    const customers = Object.keys(this.data.collections.customers).length;
    if (customers > 0) throw new Error(`the fake clock can start in the past only before the first customer; this store has ${customers}`);
    this.data.clock_offset_s = unixSeconds - Math.floor(Date.now() / 1000);
  }

  /**
   * Moves the clock forward to `unixSeconds`. The clock runs on with real time while the fake works,
   * so a target it has already passed (a period boundary reached, then a second ticked while that
   * period was invoiced) leaves it where it is: it never moves back. Requests for a time in the past
   * are refused before this, naming `to`.
   */
  advanceClockTo(unixSeconds: number): void {
    const offset = unixSeconds - Math.floor(Date.now() / 1000);
    if (offset > this.data.clock_offset_s) this.data.clock_offset_s = offset;
  }

  nextSeq(): number {
    this.data.seq += 1;
    return this.data.seq;
  }

  insert<T extends StripeObject>(collection: CollectionName, obj: T): T {
    this.data.collections[collection][obj.id] = obj;
    this.data.order[obj.id] = this.nextSeq();
    return obj;
  }

  get(collection: CollectionName, id: string): StripeObject | undefined {
    const found = this.data.collections[collection][id];
    return found && Object.prototype.hasOwnProperty.call(this.data.collections[collection], id) ? found : undefined;
  }

  /** All objects of a collection, newest first (Stripe's list order). */
  newestFirst(collection: CollectionName): StripeObject[] {
    const all = Object.values(this.data.collections[collection]);
    return all.sort((a, b) => (this.data.order[b.id] ?? 0) - (this.data.order[a.id] ?? 0));
  }

  seqOf(id: string): number {
    return this.data.order[id] ?? 0;
  }

  /**
   * What a request handler may change, for rolling back a request that fails half-way (Stripe
   * requests are all-or-nothing). Handlers only append events, meter events and deliveries, so their
   * counts are enough (and keep the dispatcher's references valid); the rest is copied.
   */
  snapshot(): StoreSnapshot {
    const { events, ...others } = this.data.collections;
    return {
      json: JSON.stringify({ collections: others, session_line_items: this.data.session_line_items, session_intent_data: this.data.session_intent_data, session_payment_intents: this.data.session_payment_intents, clock_offset_s: this.data.clock_offset_s }),
      events: Object.keys(events).length,
      meterEvents: this.data.meter_events.length,
      deliveries: this.data.deliveries.length,
    };
  }

  restore(snapshot: StoreSnapshot): void {
    const copied = JSON.parse(snapshot.json) as Pick<FakeStateData, "session_line_items" | "session_intent_data" | "session_payment_intents" | "clock_offset_s"> & {
      collections: Omit<FakeStateData["collections"], "events">;
    };
    const events = this.data.collections.events;
    for (const id of Object.keys(events).slice(snapshot.events)) delete events[id];
    for (const e of this.data.meter_events.slice(snapshot.meterEvents)) this.meterIdentifiers.delete(e.identifier);
    this.data = {
      ...this.data,
      ...copied,
      collections: { ...copied.collections, events },
      meter_events: this.data.meter_events.slice(0, snapshot.meterEvents),
      deliveries: this.data.deliveries.slice(0, snapshot.deliveries),
    };
  }

  /** Writes the state atomically (temp file + rename), so a crash never leaves half a file. */
  persist(): void {
    if (!this.filePath) return;
    mkdirSync(dirname(this.filePath), { recursive: true });
    const tmp = `${this.filePath}.${process.pid}.tmp`;
    writeFileSync(tmp, JSON.stringify(this.data));
    renameSync(tmp, this.filePath);
  }
}
