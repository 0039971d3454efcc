import "server-only";
import { invalidParam, resourceMissing } from "./errors";
import type { Params } from "./params";
import { newId, type CollectionName, type Delivery, type StripeObject, type StripeFakeStore } from "./store";

/** Everything a resource handler needs for one request. */
export interface Ctx {
  store: StripeFakeStore;
  /** Fake-clock time of the request, unix seconds. */
  now: number;
  requestId: string | null;
  idempotencyKey: string | null;
  /** Where the fake is reachable (for hosted page URLs), e.g. http://127.0.0.1:12111 */
  baseUrl: string;
  apiVersion: string;
  /** Records an event and queues its webhooks. */
  emit(type: string, object: StripeObject, previousAttributes?: Record<string, unknown>): StripeObject;
}

export interface HandlerResult {
  status?: number;
  body: unknown;
}

/** Deep copy of plain JSON data, so events and stored objects never share references. */
export function clone<T>(value: T): T {
  return JSON.parse(JSON.stringify(value)) as T;
}

/** Builds and stores an event plus one pending delivery per webhook endpoint subscribed to its type. */
export function recordEvent(
  store: StripeFakeStore,
  meta: { now: number; requestId: string | null; idempotencyKey: string | null; apiVersion: string },
  type: string,
  object: StripeObject,
  previousAttributes?: Record<string, unknown>,
): { event: StripeObject; deliveries: Delivery[] } {
  const endpoints = store
    .newestFirst("webhook_endpoints")
    .reverse()
    .filter((we) => we.status === "enabled" && ((we.enabled_events as string[]).includes("*") || (we.enabled_events as string[]).includes(type)));
  const event: StripeObject = {
    id: newId("evt"),
    object: "event",
    api_version: meta.apiVersion,
    created: meta.now,
    data: { object: clone(object), ...(previousAttributes ? { previous_attributes: clone(previousAttributes) } : {}) },
    livemode: false,
    pending_webhooks: endpoints.length,
    request: { id: meta.requestId, idempotency_key: meta.idempotencyKey },
    type,
  };
  store.insert("events", event);
  const deliveries = endpoints.map((we) => {
    const delivery: Delivery = {
      id: newId("whdel"),
      event: event.id,
      endpoint: we.id,
      seq: store.nextSeq(),
      state: "pending",
      attempts: [],
      next_attempt_at: Date.now(),
    };
    store.data.deliveries.push(delivery);
    return delivery;
  });
  return { event, deliveries };
}

const OBJECT_LABELS: Record<CollectionName, string> = {
  customers: "customer",
  products: "product",
  prices: "price",
  checkout_sessions: "checkout.session",
  payment_intents: "payment_intent",
  payment_methods: "PaymentMethod",
  meters: "billing.meter",
  subscriptions: "subscription",
  invoices: "invoice",
  events: "event",
  webhook_endpoints: "webhook endpoint",
  charges: "charge",
  refunds: "refund",
  disputes: "dispute",
  invoiceitems: "invoiceitem",
};

export function mustGet(store: StripeFakeStore, collection: CollectionName, id: string, param = "id"): StripeObject {
  const found = store.get(collection, id);
  if (!found) throw resourceMissing(OBJECT_LABELS[collection], id, param);
  return found;
}

export interface ListEnvelope {
  object: "list";
  data: unknown[];
  has_more: boolean;
  url: string;
}

/**
 * Stripe's cursor pagination over a newest-first list: `limit` (1–100, default 10), `starting_after`
 * (older than the cursor), `ending_before` (newer than the cursor, the page nearest to it).
 */
export function paginate(items: StripeObject[], params: Params, url: string, cursorLabel = "object"): ListEnvelope {
  const limit = params.integer("limit", { min: 1, max: 100 }) ?? 10;
  const startingAfter = params.string("starting_after");
  const endingBefore = params.string("ending_before");
  if (startingAfter && endingBefore) {
    throw invalidParam("ending_before", "You may only specify one of these parameters: starting_after, ending_before.", "parameters_exclusive");
  }
  if (startingAfter) {
    const index = items.findIndex((o) => o.id === startingAfter);
    if (index === -1) throw resourceMissing(cursorLabel, startingAfter, "starting_after");
    const page = items.slice(index + 1, index + 1 + limit);
    return { object: "list", data: page, has_more: index + 1 + limit < items.length, url };
  }
  if (endingBefore) {
    const index = items.findIndex((o) => o.id === endingBefore);
    if (index === -1) throw resourceMissing(cursorLabel, endingBefore, "ending_before");
    const from = Math.max(0, index - limit);
    return { object: "list", data: items.slice(from, index), has_more: from > 0, url };
  }
  return { object: "list", data: items.slice(0, limit), has_more: items.length > limit, url };
}

/**
 * A list's equality filters, as Stripe's list parameters work: each given value must equal the
 * object's field of that name; a value not given (undefined) lets every object through. The caller
 * reads each value from the request, so its type and allowed values are checked there, in its order.
 */
export function fieldsEqual(values: Record<string, unknown>): (o: StripeObject) => boolean {
  const given = Object.entries(values).filter(([, value]) => value !== undefined);
  return (o) => given.every(([field, value]) => o[field] === value);
}

/** `created` filters as Stripe takes them: `created=<ts>` or `created[gt|gte|lt|lte]=<ts>`. */
export function createdFilter(params: Params, key = "created"): (o: StripeObject) => boolean {
  if (!params.has(key)) return () => true;
  if (typeof params.raw[key] === "string") {
    const exact = params.integer(key) as number;
    return (o) => o[key] === exact;
  }
  const range = params.object(key) as Params;
  range.allowOnly(["gt", "gte", "lt", "lte"]);
  const gt = range.integer("gt");
  const gte = range.integer("gte");
  const lt = range.integer("lt");
  const lte = range.integer("lte");
  return (o) => {
    const v = o[key] as number;
    return (gt === undefined || v > gt) && (gte === undefined || v >= gte) && (lt === undefined || v < lt) && (lte === undefined || v <= lte);
  };
}

const EXPANDABLE_PREFIXES: Array<[string, CollectionName]> = [
  ["cus_", "customers"],
  ["prod_", "products"],
  ["price_", "prices"],
  ["cs_", "checkout_sessions"],
  ["pi_", "payment_intents"],
  ["pm_", "payment_methods"],
  ["mtr_", "meters"],
  ["sub_", "subscriptions"],
  ["in_", "invoices"],
  ["ch_", "charges"],
  ["re_", "refunds"],
  ["du_", "disputes"],
];

function lookupById(store: StripeFakeStore, id: string): StripeObject | undefined {
  for (const [prefix, collection] of EXPANDABLE_PREFIXES) {
    if (id.startsWith(prefix)) return store.get(collection, id);
  }
  return undefined;
}

/**
 * `expand[]=customer`, `expand[]=data.customer`, `expand[]=line_items`, nested paths up to 4 levels as
 * Stripe allows. Unknown or non-expandable paths are rejected with the param named.
 */
export function expand(store: StripeFakeStore, body: unknown, paths: string[]): unknown {
  if (paths.length === 0) return body;
  const result = clone(body);
  for (const path of paths) {
    const segments = path.split(".");
    if (segments.length > 4) throw invalidParam("expand", `You cannot expand more than 4 levels of a property: ${path}`);
    const ok = expandAt(store, result, segments);
    if (!ok) throw invalidParam("expand", `This property cannot be expanded (${path}).`);
  }
  return result;
}

function expandAt(store: StripeFakeStore, node: unknown, segments: string[]): boolean {
  if (node === null || typeof node !== "object") return false;
  const [head, ...rest] = segments;
  if (Array.isArray(node)) return node.every((item) => expandAt(store, item, segments));
  const obj = node as Record<string, unknown>;
  if (head === "data" && (obj.object === "list" || obj.object === "search_result")) {
    return (obj.data as unknown[]).every((item) => expandAt(store, item, rest));
  }
  if (rest.length === 0) {
    if (head === "line_items" && obj.object === "checkout.session") {
      const items = store.data.session_line_items[obj.id as string] ?? [];
      obj.line_items = { object: "list", data: clone(items), has_more: false, url: `/v1/checkout/sessions/${String(obj.id)}/line_items` };
      return true;
    }
    const value = obj[head];
    if (value === null) return head in obj;
    if (typeof value === "string") {
      const found = lookupById(store, value);
      if (!found) return false;
      obj[head] = clone(found);
      return true;
    }
    return typeof value === "object" && value !== null && "id" in value; // already expanded
  }
  if (!(head in obj)) return false;
  let child = obj[head];
  if (typeof child === "string") {
    const found = lookupById(store, child);
    if (!found) return false;
    child = clone(found);
    obj[head] = child;
  }
  return child === null ? true : expandAt(store, child, rest);
}
