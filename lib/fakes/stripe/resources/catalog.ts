import "server-only";
import { clone, createdFilter, fieldsEqual, mustGet, paginate, type Ctx, type HandlerResult } from "../context";
import { invalidParam, resourceMissing } from "../errors";
import { applyMetadata, type Params } from "../params";
import { newId, type StripeObject } from "../store";
import { randomBytes } from "node:crypto";

/** Test PaymentMethod ids Stripe documents for test mode; the fake resolves them to its test cards. */
export const TEST_PAYMENT_METHODS: Record<string, string> = {
  pm_card_visa: "4242424242424242",
  pm_card_chargeDeclined: "4000000000000002",
  pm_card_chargeDeclinedInsufficientFunds: "4000000000009995",
};

const CURRENCY = /^[a-z]{3}$/;

function currencyParam(params: Params, key = "currency"): string {
  const currency = params.requiredString(key).toLowerCase();
  if (!CURRENCY.test(currency)) throw invalidParam(params.name(key), `Invalid currency: ${currency}. It must be a three-letter ISO code in lowercase.`);
  return currency;
}

// ---------------------------------------------------------------- customers

const CUSTOMER_WRITE_KEYS = ["email", "name", "description", "metadata", "phone", "invoice_settings", "preferred_locales", "address"] as const;

/** Stripe's address hash (every field optional, country a 2-letter code); an empty string unsets it. */
function readAddress(params: Params): Record<string, string | null> | null | undefined {
  if (params.raw.address === "") return null;
  const address = params.object("address");
  if (!address) return undefined;
  address.allowOnly(["line1", "line2", "city", "state", "postal_code", "country"]);
  const field = (key: string) => address.nullableString(key, 200) ?? null;
  const country = field("country");
  if (country !== null && !/^[A-Za-z]{2}$/.test(country)) throw invalidParam(address.name("country"), "Country must be a two-letter ISO code (ISO 3166-1 alpha-2).");
  return { city: field("city"), country: country?.toUpperCase() ?? null, line1: field("line1"), line2: field("line2"), postal_code: field("postal_code"), state: field("state") };
}

/** invoice_settings[custom_fields]: up to 4 {name ≤ 40, value ≤ 140} shown on every invoice; "" unsets. */
function readCustomFields(settings: Params): Array<{ name: string; value: string }> | null | undefined {
  if (settings.raw.custom_fields === "") return null;
  if (settings.raw.custom_fields === undefined) return undefined;
  return settings.array("custom_fields", { maxItems: 4 }).map((f) => {
    f.allowOnly(["name", "value"]);
    return { name: f.requiredString("name", { max: 40 }), value: f.requiredString("value", { max: 140 }) };
  });
}

function readDefaultPaymentMethod(ctx: Ctx, params: Params): string | null | undefined {
  const settings = params.object("invoice_settings");
  if (!settings) return undefined;
  settings.allowOnly(["default_payment_method", "custom_fields"]);
  if (!settings.has("default_payment_method")) return undefined;
  const pm = settings.nullableString("default_payment_method");
  if (pm) ensurePaymentMethod(ctx, pm, settings.name("default_payment_method"));
  return pm;
}

/** Test ids like pm_card_visa become stored PaymentMethod objects the first time they are used. */
export function ensurePaymentMethod(ctx: Ctx, id: string, param: string): StripeObject {
  const existing = ctx.store.get("payment_methods", id);
  if (existing) return existing;
  const cardNumber = TEST_PAYMENT_METHODS[id];
  if (!cardNumber) return mustGet(ctx.store, "payment_methods", id, param);
  return ctx.store.insert("payment_methods", paymentMethodObject(ctx, id, cardNumber, null));
}

export function paymentMethodObject(ctx: Ctx, id: string, cardNumber: string, customer: string | null): StripeObject {
  return {
    id,
    object: "payment_method",
    billing_details: { address: null, email: null, name: null, phone: null },
    card: { brand: "visa", country: "US", exp_month: 12, exp_year: new Date(ctx.now * 1000).getUTCFullYear() + 3, funding: "credit", last4: cardNumber.slice(-4) },
    created: ctx.now,
    customer,
    livemode: false,
    metadata: {},
    type: "card",
  };
}

export function newCustomerObject(
  ctx: Ctx,
  fields: { email?: string | null; name?: string | null; description?: string | null; phone?: string | null; metadata?: Record<string, string>; preferredLocales?: string[]; defaultPaymentMethod?: string | null },
): StripeObject {
  return {
    id: newId("cus", 14),
    object: "customer",
    address: null,
    balance: 0,
    created: ctx.now,
    currency: null,
    default_source: null,
    delinquent: false,
    description: fields.description ?? null,
    discount: null,
    email: fields.email ?? null,
    invoice_prefix: randomBytes(4).toString("hex").toUpperCase(),
    invoice_settings: { custom_fields: null, default_payment_method: fields.defaultPaymentMethod ?? null, footer: null, rendering_options: null },
    livemode: false,
    metadata: fields.metadata ?? {},
    name: fields.name ?? null,
    next_invoice_sequence: 1,
    phone: fields.phone ?? null,
    preferred_locales: fields.preferredLocales ?? [],
    shipping: null,
    tax_exempt: "none",
    test_clock: null,
  };
}

export function createCustomer(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(CUSTOMER_WRITE_KEYS);
  const defaultPm = readDefaultPaymentMethod(ctx, params);
  const customer = newCustomerObject(ctx, {
    email: params.nullableString("email", 512),
    name: params.nullableString("name", 256),
    description: params.nullableString("description"),
    phone: params.nullableString("phone", 20),
    metadata: applyMetadata({}, params.metadata()),
    preferredLocales: params.stringArray("preferred_locales"),
    defaultPaymentMethod: defaultPm,
  });
  customer.address = readAddress(params) ?? null;
  const settings = params.object("invoice_settings");
  const customFields = settings ? readCustomFields(settings) : undefined;
  if (customFields !== undefined) customer.invoice_settings = { ...(customer.invoice_settings as object), custom_fields: customFields };
  ctx.store.insert("customers", customer);
  ctx.emit("customer.created", customer);
  return { body: customer };
}

export function retrieveCustomer(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  return { body: mustGet(ctx.store, "customers", id) };
}

export function updateCustomer(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly(CUSTOMER_WRITE_KEYS);
  const customer = mustGet(ctx.store, "customers", id);
  if (customer.deleted) throw resourceMissing("customer", id);
  const before = clone(customer);
  const previous: Record<string, unknown> = {};
  const set = (key: string, value: unknown) => {
    if (value === undefined) return;
    if (JSON.stringify(customer[key]) !== JSON.stringify(value)) previous[key] = before[key];
    customer[key] = value;
  };
  set("email", params.nullableString("email", 512));
  set("name", params.nullableString("name", 256));
  set("description", params.nullableString("description"));
  set("phone", params.nullableString("phone", 20));
  set("preferred_locales", params.stringArray("preferred_locales"));
  set("metadata", params.has("metadata") ? applyMetadata(customer.metadata as Record<string, string>, params.metadata()) : undefined);
  set("address", readAddress(params));
  const defaultPm = readDefaultPaymentMethod(ctx, params);
  if (defaultPm !== undefined) {
    set("invoice_settings", { ...(customer.invoice_settings as object), default_payment_method: defaultPm });
  }
  const settings = params.object("invoice_settings");
  const customFields = settings ? readCustomFields(settings) : undefined;
  if (customFields !== undefined) set("invoice_settings", { ...(customer.invoice_settings as object), custom_fields: customFields });
  if (Object.keys(previous).length > 0) ctx.emit("customer.updated", customer, previous);
  return { body: customer };
}

export function deleteCustomer(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  mustGet(ctx.store, "customers", id);
  const original = ctx.store.data.collections.customers[id];
  if (original.deleted) throw resourceMissing("customer", id);
  // Deleting a customer cancels its subscriptions at once, as Stripe does.
  for (const sub of ctx.store.newestFirst("subscriptions")) {
    if (sub.customer !== id || sub.status === "canceled") continue;
    const previous = { status: sub.status };
    sub.status = "canceled";
    sub.canceled_at = ctx.now;
    sub.ended_at = ctx.now;
    sub.cancellation_details = { comment: null, feedback: null, reason: "cancellation_requested" };
    ctx.emit("customer.subscription.deleted", sub, previous);
  }
  const deleted: StripeObject = { id, object: "customer", deleted: true };
  ctx.store.data.collections.customers[id] = deleted;
  ctx.emit("customer.deleted", original);
  return { body: deleted };
}

export function listCustomers(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["limit", "starting_after", "ending_before", "email", "created"]);
  const matches = fieldsEqual({ email: params.string("email", { max: 512 }) });
  const created = createdFilter(params);
  const items = ctx.store
    .newestFirst("customers")
    .filter((c) => !c.deleted && matches(c) && created(c));
  return { body: paginate(items, params, "/v1/customers", "customer") };
}

/**
 * A subset of Stripe's search query language: clauses `field:'value'` or `metadata['key']:'value'`
 * joined by AND, over email, name, phone and metadata (exact match).
 */
export function searchCustomers(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["query", "limit", "page"]);
  const query = params.requiredString("query");
  const clauses = query.split(/\s+AND\s+/i).map((clause) => {
    const m = /^\s*(email|name|phone|metadata\[(['"])(.+?)\2\])\s*:\s*(['"])(.*)\4\s*$/.exec(clause);
    if (!m) {
      throw invalidParam("query", `The fake supports only clauses like email:'a@b.c' or metadata['key']:'value' joined by AND; cannot parse: ${clause}`);
    }
    const field = m[3] !== undefined ? { metadataKey: m[3] } : { field: m[1] };
    return { ...field, value: m[5] };
  });
  const limit = params.integer("limit", { min: 1, max: 100 }) ?? 10;
  const pageToken = params.string("page");
  const offset = pageToken ? Number(Buffer.from(pageToken, "base64url").toString("utf8")) : 0;
  if (!Number.isInteger(offset) || offset < 0) throw invalidParam("page", "Invalid page token.");
  const matches = ctx.store.newestFirst("customers").filter(
    (c) =>
      !c.deleted &&
      clauses.every((cl) =>
        "metadataKey" in cl && cl.metadataKey !== undefined
          ? (c.metadata as Record<string, string>)[cl.metadataKey] === cl.value
          : c[(cl as { field: string }).field] === cl.value,
      ),
  );
  const data = matches.slice(offset, offset + limit);
  const hasMore = offset + limit < matches.length;
  return {
    body: {
      object: "search_result",
      data,
      has_more: hasMore,
      next_page: hasMore ? Buffer.from(String(offset + limit), "utf8").toString("base64url") : null,
      url: "/v1/customers/search",
    },
  };
}

// ---------------------------------------------------------------- products

export function insertProduct(ctx: Ctx, fields: { id?: string; name: string; description?: string | null; metadata?: Record<string, string>; active?: boolean }): StripeObject {
  if (fields.id && ctx.store.get("products", fields.id)) {
    throw invalidParam("id", `Product already exists.`, "resource_already_exists");
  }
  const product: StripeObject = {
    id: fields.id ?? newId("prod", 14),
    object: "product",
    active: fields.active ?? true,
    created: ctx.now,
    default_price: null,
    description: fields.description ?? null,
    images: [],
    livemode: false,
    marketing_features: [],
    metadata: fields.metadata ?? {},
    name: fields.name,
    package_dimensions: null,
    shippable: null,
    statement_descriptor: null,
    tax_code: null,
    type: "service",
    unit_label: null,
    updated: ctx.now,
    url: null,
  };
  ctx.store.insert("products", product);
  ctx.emit("product.created", product);
  return product;
}

export function createProduct(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["id", "name", "description", "metadata", "active", "unit_label"]);
  const product = insertProduct(ctx, {
    id: params.string("id", { max: 200 }),
    name: params.requiredString("name", { max: 250 }),
    description: params.nullableString("description"),
    metadata: applyMetadata({}, params.metadata()),
    active: params.boolean("active"),
  });
  const unitLabel = params.nullableString("unit_label", 12);
  if (unitLabel !== undefined) product.unit_label = unitLabel;
  return { body: product };
}

export function retrieveProduct(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  return { body: mustGet(ctx.store, "products", id) };
}

export function updateProduct(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly(["name", "description", "metadata", "active", "unit_label"]);
  const product = mustGet(ctx.store, "products", id);
  const previous: Record<string, unknown> = {};
  const set = (key: string, value: unknown) => {
    if (value === undefined) return;
    previous[key] = product[key];
    product[key] = value;
  };
  set("name", params.string("name", { max: 250 }));
  set("description", params.nullableString("description"));
  set("active", params.boolean("active"));
  set("unit_label", params.nullableString("unit_label", 12));
  set("metadata", params.has("metadata") ? applyMetadata(product.metadata as Record<string, string>, params.metadata()) : undefined);
  product.updated = ctx.now;
  ctx.emit("product.updated", product, previous);
  return { body: product };
}

export function listProducts(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["limit", "starting_after", "ending_before", "active", "created", "ids"]);
  const matches = fieldsEqual({ active: params.boolean("active") });
  const ids = params.stringArray("ids");
  const created = createdFilter(params);
  const items = ctx.store
    .newestFirst("products")
    .filter((p) => matches(p) && (!ids || ids.includes(p.id)) && created(p));
  return { body: paginate(items, params, "/v1/products", "product") };
}

// ---------------------------------------------------------------- prices

export interface PriceInput {
  currency: string;
  product: string;
  unitAmount: number | null;
  unitAmountDecimal: string;
  recurring: StripeObject["recurring"] | null;
  nickname?: string | null;
  lookupKey?: string | null;
  metadata?: Record<string, string>;
  active?: boolean;
}

/** Reads unit_amount / unit_amount_decimal (exactly one), as Stripe requires for per-unit prices. */
export function readUnitAmount(params: Params): { unitAmount: number | null; unitAmountDecimal: string } {
  const unitAmount = params.integer("unit_amount", { min: 0, max: 99_999_999 });
  const unitAmountDecimal = params.decimal("unit_amount_decimal");
  if (unitAmount !== undefined && unitAmountDecimal !== undefined) {
    throw invalidParam("unit_amount_decimal", "You may only specify one of these parameters: unit_amount, unit_amount_decimal.", "parameters_exclusive");
  }
  if (unitAmount === undefined && unitAmountDecimal === undefined) {
    throw invalidParam(params.name("unit_amount"), `Missing required param: ${params.name("unit_amount")} (or ${params.name("unit_amount_decimal")}).`, "parameter_missing");
  }
  if (unitAmount !== undefined) return { unitAmount, unitAmountDecimal: String(unitAmount) };
  const decimal = unitAmountDecimal as string;
  const asInteger = /^\d+$/.test(decimal) ? Number(decimal) : /^\d+\.0+$/.test(decimal) ? Number(decimal.split(".")[0]) : null;
  return { unitAmount: asInteger, unitAmountDecimal: decimal };
}

export function insertPrice(ctx: Ctx, input: PriceInput): StripeObject {
  const price: StripeObject = {
    id: newId("price", 24),
    object: "price",
    active: input.active ?? true,
    billing_scheme: "per_unit",
    created: ctx.now,
    currency: input.currency,
    custom_unit_amount: null,
    livemode: false,
    lookup_key: input.lookupKey ?? null,
    metadata: input.metadata ?? {},
    nickname: input.nickname ?? null,
    product: input.product,
    recurring: input.recurring,
    tax_behavior: "unspecified",
    tiers_mode: null,
    transform_quantity: null,
    type: input.recurring ? "recurring" : "one_time",
    unit_amount: input.unitAmount,
    unit_amount_decimal: input.unitAmountDecimal,
  };
  ctx.store.insert("prices", price);
  ctx.emit("price.created", price);
  return price;
}

function readRecurring(ctx: Ctx, params: Params): StripeObject["recurring"] | null {
  const recurring = params.object("recurring");
  if (!recurring) return null;
  recurring.allowOnly(["interval", "interval_count", "usage_type", "meter"]);
  const interval = recurring.requiredString("interval", { oneOf: ["day", "week", "month", "year"] });
  const intervalCount = recurring.integer("interval_count", { min: 1, max: interval === "year" ? 3 : interval === "month" ? 36 : interval === "week" ? 156 : 1095 }) ?? 1;
  const usageType = recurring.string("usage_type", { oneOf: ["licensed", "metered"] }) ?? "licensed";
  const meter = recurring.string("meter");
  if (usageType === "metered" && !meter) throw invalidParam(recurring.name("meter"), `Missing required param: ${recurring.name("meter")} (metered prices are backed by a billing meter).`, "parameter_missing");
  if (usageType === "licensed" && meter) throw invalidParam(recurring.name("meter"), `${recurring.name("meter")} can only be set when ${recurring.name("usage_type")} is metered.`);
  if (meter) {
    const found = mustGet(ctx.store, "meters", meter, recurring.name("meter"));
    if (found.status !== "active") throw invalidParam(recurring.name("meter"), `Meter ${meter} is not active.`);
  }
  return { interval, interval_count: intervalCount, meter: meter ?? null, trial_period_days: null, usage_type: usageType };
}

export function createPrice(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["currency", "product", "product_data", "unit_amount", "unit_amount_decimal", "recurring", "nickname", "lookup_key", "metadata", "active", "billing_scheme", "tax_behavior"]);
  const currency = currencyParam(params);
  // Accepted only with the values the fake implements (per-unit pricing; tax is out of scope).
  params.string("billing_scheme", { oneOf: ["per_unit"] });
  params.string("tax_behavior", { oneOf: ["unspecified", "exclusive", "inclusive"] });
  const { unitAmount, unitAmountDecimal } = readUnitAmount(params);
  const recurring = readRecurring(ctx, params);
  let productId = params.string("product");
  const productData = params.object("product_data");
  if (productId && productData) throw invalidParam("product_data", "You may only specify one of these parameters: product, product_data.", "parameters_exclusive");
  if (productId) mustGet(ctx.store, "products", productId, "product");
  else if (productData) {
    productData.allowOnly(["name", "metadata", "active"]);
    productId = insertProduct(ctx, { name: productData.requiredString("name", { max: 250 }), metadata: applyMetadata({}, productData.metadata()), active: productData.boolean("active") }).id;
  } else throw invalidParam("product", "Missing required param: product (or product_data).", "parameter_missing");
  const lookupKey = params.nullableString("lookup_key", 200);
  if (lookupKey && ctx.store.newestFirst("prices").some((p) => p.lookup_key === lookupKey)) {
    throw invalidParam("lookup_key", `A price (\`${lookupKey}\`) already uses that lookup key.`);
  }
  const price = insertPrice(ctx, {
    currency,
    product: productId,
    unitAmount,
    unitAmountDecimal,
    recurring,
    nickname: params.nullableString("nickname"),
    lookupKey,
    metadata: applyMetadata({}, params.metadata()),
    active: params.boolean("active"),
  });
  return { body: price };
}

export function retrievePrice(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  return { body: mustGet(ctx.store, "prices", id) };
}

export function updatePrice(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly(["active", "nickname", "lookup_key", "metadata"]);
  const price = mustGet(ctx.store, "prices", id);
  const previous: Record<string, unknown> = {};
  const set = (key: string, value: unknown) => {
    if (value === undefined) return;
    previous[key] = price[key];
    price[key] = value;
  };
  set("active", params.boolean("active"));
  set("nickname", params.nullableString("nickname"));
  set("lookup_key", params.nullableString("lookup_key", 200));
  set("metadata", params.has("metadata") ? applyMetadata(price.metadata as Record<string, string>, params.metadata()) : undefined);
  ctx.emit("price.updated", price, previous);
  return { body: price };
}

export function listPrices(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["limit", "starting_after", "ending_before", "active", "product", "type", "currency", "lookup_keys", "created", "recurring"]);
  const matches = fieldsEqual({
    active: params.boolean("active"),
    product: params.string("product"),
    type: params.string("type", { oneOf: ["one_time", "recurring"] }),
    currency: params.string("currency"),
  });
  const lookupKeys = params.stringArray("lookup_keys");
  const created = createdFilter(params);
  const items = ctx.store
    .newestFirst("prices")
    .filter(
      (p) =>
        matches(p) &&
        (!lookupKeys || lookupKeys.includes(p.lookup_key as string)) &&
        created(p),
    );
  return { body: paginate(items, params, "/v1/prices", "price") };
}

export { currencyParam };
