import "server-only";
import { createdFilter, mustGet, paginate, type Ctx, type HandlerResult } from "../context";
import { invalidParam } from "../errors";
import { applyMetadata, type Params } from "../params";
import { newId, type StripeObject } from "../store";

export function retrieveEvent(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  return { body: mustGet(ctx.store, "events", id) };
}

export function listEvents(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["limit", "starting_after", "ending_before", "type", "types", "created", "delivery_success"]);
  const type = params.string("type");
  const types = params.stringArray("types");
  if (type && types) throw invalidParam("types", "You may only specify one of these parameters: type, types.", "parameters_exclusive");
  const deliverySuccess = params.boolean("delivery_success");
  const created = createdFilter(params);
  // `type` takes a `*` wildcard as Stripe documents (e.g. invoice.*).
  const matchesType = (t: string) => {
    const patterns = type ? [type] : (types ?? ["*"]);
    return patterns.some((p) => p === "*" || p === t || (p.endsWith(".*") && t.startsWith(p.slice(0, -1))));
  };
  const items = ctx.store.newestFirst("events").filter((e) => {
    if (!matchesType(e.type as string) || !created(e)) return false;
    if (deliverySuccess === undefined) return true;
    const deliveries = ctx.store.data.deliveries.filter((d) => d.event === e.id);
    const failed = deliveries.some((d) => d.state !== "succeeded");
    return deliverySuccess ? deliveries.length > 0 && !failed : failed;
  });
  return { body: paginate(items, params, "/v1/events", "event") };
}

function readEnabledEvents(params: Params, required: boolean): string[] | undefined {
  const events = params.stringArray("enabled_events");
  if (!events) {
    if (required) throw invalidParam("enabled_events", "Missing required param: enabled_events.", "parameter_missing");
    return undefined;
  }
  if (events.length === 0) throw invalidParam("enabled_events", "enabled_events must list at least one event type (or '*').");
  events.forEach((e, i) => {
    // Endpoints take '*' or exact event types (no group wildcards, unlike GET /v1/events?type=).
    if (!/^(\*|[a-z_]+(\.[a-z_]+)+)$/.test(e)) throw invalidParam(`enabled_events[${i}]`, `Invalid event type: ${e} (use '*' or an exact type such as invoice.paid)`);
  });
  return events;
}

function readUrl(params: Params, required: boolean): string | undefined {
  const url = params.string("url", { required, max: 5000 });
  if (url !== undefined && !/^https?:\/\/\S+$/.test(url)) throw invalidParam("url", "Invalid URL: must start with http:// or https://", "url_invalid");
  return url;
}

/** The object shape, with `secret` returned only on creation as Stripe does. */
function publicEndpoint(endpoint: StripeObject, includeSecret: boolean): StripeObject {
  if (includeSecret) return endpoint;
  const { secret: _secret, ...rest } = endpoint;
  return rest as StripeObject;
}

export function insertWebhookEndpoint(ctx: Pick<Ctx, "store" | "now">, fields: { url: string; enabledEvents: string[]; secret?: string; description?: string | null; metadata?: Record<string, string>; apiVersion?: string | null }): StripeObject {
  const endpoint: StripeObject = {
    id: newId("we", 24),
    object: "webhook_endpoint",
    api_version: fields.apiVersion ?? null,
    application: null,
    created: ctx.now,
    description: fields.description ?? null,
    enabled_events: fields.enabledEvents,
    livemode: false,
    metadata: fields.metadata ?? {},
    secret: fields.secret ?? newId("whsec", 32),
    status: "enabled",
    url: fields.url,
  };
  return ctx.store.insert("webhook_endpoints", endpoint);
}

export function createWebhookEndpoint(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["url", "enabled_events", "description", "metadata", "api_version", "connect"]);
  const url = readUrl(params, true) as string;
  const enabledEvents = readEnabledEvents(params, true) as string[];
  const endpoint = insertWebhookEndpoint(ctx, {
    url,
    enabledEvents,
    description: params.nullableString("description"),
    metadata: applyMetadata({}, params.metadata()),
    apiVersion: params.string("api_version") ?? null,
  });
  return { body: publicEndpoint(endpoint, true) };
}

export function retrieveWebhookEndpoint(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  const endpoint = mustGet(ctx.store, "webhook_endpoints", id);
  if (endpoint.deleted) throw invalidParam("id", `No such webhook endpoint: '${id}'`, "resource_missing");
  return { body: publicEndpoint(endpoint, false) };
}

export function updateWebhookEndpoint(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly(["url", "enabled_events", "description", "metadata", "disabled"]);
  const endpoint = mustGet(ctx.store, "webhook_endpoints", id);
  const url = readUrl(params, false);
  if (url !== undefined) endpoint.url = url;
  const events = readEnabledEvents(params, false);
  if (events) endpoint.enabled_events = events;
  const description = params.nullableString("description");
  if (description !== undefined) endpoint.description = description;
  if (params.has("metadata")) endpoint.metadata = applyMetadata(endpoint.metadata as Record<string, string>, params.metadata());
  const disabled = params.boolean("disabled");
  if (disabled !== undefined) endpoint.status = disabled ? "disabled" : "enabled";
  return { body: publicEndpoint(endpoint, false) };
}

export function deleteWebhookEndpoint(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  mustGet(ctx.store, "webhook_endpoints", id);
  ctx.store.data.collections.webhook_endpoints[id] = { id, object: "webhook_endpoint", deleted: true };
  return { body: { id, object: "webhook_endpoint", deleted: true } };
}

export function listWebhookEndpoints(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["limit", "starting_after", "ending_before"]);
  const items = ctx.store
    .newestFirst("webhook_endpoints")
    .filter((e) => !e.deleted)
    .map((e) => publicEndpoint(e, false));
  return { body: paginate(items, params, "/v1/webhook_endpoints", "webhook endpoint") };
}
