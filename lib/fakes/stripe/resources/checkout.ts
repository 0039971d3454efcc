import "server-only";
import { cardOutcome, DISPUTED_CARDS, normalizeCardNumber, type CardOutcome } from "../cards";
import { clone, createdFilter, fieldsEqual, mustGet, paginate, type Ctx, type HandlerResult } from "../context";
import { invalidParam, invalidRequest } from "../errors";
import { lineAmountCents } from "../money";
import { applyMetadata, type Params } from "../params";
import { newId, type StripeObject } from "../store";
import { createCharge, openDispute, settleCharge } from "./payments";
import { currencyParam, insertPrice, insertProduct, newCustomerObject, paymentMethodObject, readUnitAmount } from "./catalog";
import { baseInvoice, finalizeInvoiceObject, invoiceLine, markPaid, setInvoiceLines } from "./billing";

const SESSION_KEYS = [
  "mode",
  "line_items",
  "customer",
  "customer_email",
  "client_reference_id",
  "metadata",
  "success_url",
  "cancel_url",
  "expires_at",
  "payment_intent_data",
  "payment_method_types",
  "currency",
  "locale",
  "submit_type",
  "ui_mode",
  "customer_creation",
  "invoice_creation",
] as const;

const MIN_EXPIRY_S = 30 * 60;
const MAX_EXPIRY_S = 24 * 60 * 60;

function readLineItem(ctx: Ctx, item: Params): { price: StripeObject; quantity: number } {
  item.allowOnly(["price", "price_data", "quantity"]);
  const quantity = item.integer("quantity", { required: true, min: 1, max: 999_999 }) as number;
  const priceId = item.string("price");
  const priceData = item.object("price_data");
  if (priceId && priceData) throw invalidParam(item.name("price_data"), `You may only specify one of these parameters: ${item.name("price")}, ${item.name("price_data")}.`, "parameters_exclusive");
  let price: StripeObject;
  if (priceId) {
    price = mustGet(ctx.store, "prices", priceId, item.name("price"));
    if (!price.active) throw invalidParam(item.name("price"), `The price specified (${priceId}) is inactive. This field only accepts active prices.`);
  } else if (priceData) {
    priceData.allowOnly(["currency", "product", "product_data", "unit_amount", "unit_amount_decimal", "recurring", "tax_behavior"]);
    const currency = currencyParam(priceData);
    const { unitAmount, unitAmountDecimal } = readUnitAmount(priceData);
    if (priceData.has("recurring")) throw invalidParam(priceData.name("recurring"), "Recurring prices are not allowed in payment mode; use subscription mode.");
    let productId = priceData.string("product");
    const productData = priceData.object("product_data");
    if (productId) mustGet(ctx.store, "products", productId, priceData.name("product"));
    else if (productData) {
      productData.allowOnly(["name", "description", "metadata"]);
      productId = insertProduct(ctx, {
        name: productData.requiredString("name", { max: 250 }),
        description: productData.nullableString("description"),
        metadata: applyMetadata({}, productData.metadata()),
        active: false,
      }).id;
    } else throw invalidParam(priceData.name("product"), `Missing required param: ${priceData.name("product")} (or ${priceData.name("product_data")}).`, "parameter_missing");
    // Stripe stores inline prices as inactive prices that cannot be reused.
    price = insertPrice(ctx, { currency, product: productId, unitAmount, unitAmountDecimal, recurring: null, active: false });
  } else {
    throw invalidParam(item.name("price"), `Missing required param: ${item.name("price")} (or ${item.name("price_data")}).`, "parameter_missing");
  }
  if (price.type !== "one_time") {
    throw invalidParam(item.name("price"), `The price ${price.id} is recurring; payment mode takes one-time prices only.`);
  }
  return { price, quantity };
}

export function createSession(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(SESSION_KEYS);
  const mode = params.requiredString("mode");
  if (mode !== "payment") {
    throw invalidParam("mode", `The fake supports Checkout in payment mode only (got '${mode}'); Kickdrift sells credit packs as one-time payments.`);
  }
  const uiMode = params.string("ui_mode", { oneOf: ["hosted"] }) ?? "hosted";
  const successUrl = params.requiredString("success_url", { max: 5000 });
  const cancelUrl = params.string("cancel_url", { max: 5000 });
  for (const [key, url] of [["success_url", successUrl], ["cancel_url", cancelUrl]] as const) {
    if (url !== undefined && !/^https?:\/\/\S+$/.test(url)) throw invalidParam(key, `Not a valid URL`, "url_invalid");
  }
  const customerId = params.string("customer");
  const customer = customerId ? mustGet(ctx.store, "customers", customerId, "customer") : null;
  if (customer?.deleted) throw invalidParam("customer", `No such customer: '${customerId}'`, "resource_missing");
  const customerEmail = params.string("customer_email", { max: 800 });
  if (customer && customerEmail) throw invalidParam("customer_email", "You may only specify one of these parameters: customer, customer_email.", "parameters_exclusive");
  const customerCreation = params.string("customer_creation", { oneOf: ["always", "if_required"] });
  if (customer && customerCreation) throw invalidParam("customer_creation", "customer_creation can only be used when no customer is given.");
  const clientReferenceId = params.string("client_reference_id", { max: 200 }) ?? null;
  const expiresAt = params.integer("expires_at") ?? ctx.now + MAX_EXPIRY_S;
  if (expiresAt < ctx.now + MIN_EXPIRY_S || expiresAt > ctx.now + MAX_EXPIRY_S) {
    throw invalidParam("expires_at", "The `expires_at` timestamp must be between 30 minutes and 24 hours from Checkout Session creation.");
  }
  const paymentTypes = params.stringArray("payment_method_types");
  if (paymentTypes && paymentTypes.some((t) => t !== "card")) throw invalidParam("payment_method_types", "The fake's hosted page takes cards only.");
  const piData = params.object("payment_intent_data");
  piData?.allowOnly(["metadata", "description", "setup_future_usage"]);
  const piMetadata = piData ? applyMetadata({}, piData.metadata()) : {};
  const piDescription = piData?.nullableString("description") ?? null;
  piData?.string("setup_future_usage", { oneOf: ["on_session", "off_session"] });

  const invoiceCreation = readInvoiceCreation(params);

  const lineItemParams = params.array("line_items", { required: true, maxItems: 100 });
  if (lineItemParams.length === 0) throw invalidParam("line_items", "line_items must contain at least one item.");
  const metadata = applyMetadata({}, params.metadata());
  const lines = lineItemParams.map((item) => readLineItem(ctx, item));
  const currency = lines[0].price.currency as string;
  lines.forEach((line, i) => {
    if (line.price.currency !== currency) throw invalidParam(`line_items[${i}][price]`, `All prices in a Checkout Session must share one currency; line_items[0] is ${currency}, line_items[${i}] is ${String(line.price.currency)}.`);
  });
  const currencyParamValue = params.string("currency");
  if (currencyParamValue && currencyParamValue.toLowerCase() !== currency) throw invalidParam("currency", `currency must match the prices' currency (${currency}).`);

  const id = newId("cs_test", 58);
  const lineItems: StripeObject[] = lines.map(({ price, quantity }) => {
    const amount = lineAmountCents(quantity, price.unit_amount_decimal as string);
    const product = ctx.store.get("products", price.product as string);
    return {
      id: newId("li", 24),
      object: "item",
      adjustable_quantity: null,
      amount_discount: 0,
      amount_subtotal: amount,
      amount_tax: 0,
      amount_total: amount,
      currency,
      description: (product?.name as string | undefined) ?? null,
      metadata: {},
      price: clone(price),
      quantity,
    };
  });
  const total = lineItems.reduce((sum, li) => sum + (li.amount_total as number), 0);
  const session: StripeObject = {
    id,
    object: "checkout.session",
    adaptive_pricing: null,
    after_expiration: null,
    allow_promotion_codes: null,
    amount_subtotal: total,
    amount_total: total,
    automatic_tax: { enabled: false, liability: null, provider: null, status: null },
    billing_address_collection: null,
    cancel_url: cancelUrl ?? null,
    client_reference_id: clientReferenceId,
    client_secret: null,
    collected_information: null,
    consent: null,
    consent_collection: null,
    created: ctx.now,
    currency,
    currency_conversion: null,
    custom_fields: [],
    custom_text: { after_submit: null, shipping_address: null, submit: null, terms_of_service_acceptance: null },
    customer: customer ? customer.id : null,
    customer_creation: customer ? null : (customerCreation ?? "if_required"),
    customer_details: customer ? { address: null, email: customer.email ?? null, name: customer.name ?? null, phone: null, tax_exempt: "none", tax_ids: [] } : null,
    customer_email: customerEmail ?? null,
    discounts: [],
    expires_at: expiresAt,
    invoice: null,
    invoice_creation: invoiceCreation,
    livemode: false,
    locale: params.string("locale") ?? null,
    metadata,
    mode: "payment",
    origin_context: null,
    payment_intent: null,
    payment_link: null,
    payment_method_collection: "if_required",
    payment_method_configuration_details: null,
    payment_method_options: {},
    payment_method_types: ["card"],
    payment_status: "unpaid",
    phone_number_collection: { enabled: false },
    recovered_from: null,
    saved_payment_method_options: null,
    setup_intent: null,
    shipping_address_collection: null,
    shipping_cost: null,
    shipping_options: [],
    status: "open",
    submit_type: params.string("submit_type", { oneOf: ["auto", "pay", "book", "donate"] }) ?? null,
    subscription: null,
    success_url: successUrl,
    total_details: { amount_discount: 0, amount_shipping: 0, amount_tax: 0 },
    ui_mode: uiMode,
    url: `${ctx.baseUrl}/c/pay/${id}`,
    wallet_options: null,
  };
  ctx.store.insert("checkout_sessions", session);
  ctx.store.data.session_line_items[id] = lineItems;
  // Kept beside the session (not on it) until the payment intent exists.
  ctx.store.data.session_intent_data[id] = { metadata: piMetadata, description: piDescription };
  return { body: session };
}

/** Checkout's `invoice_creation` (payment mode): when enabled, a paid invoice is made for the session once it is paid. */
function readInvoiceCreation(params: Params): Record<string, unknown> {
  const off = { enabled: false, invoice_data: { account_tax_ids: null, custom_fields: null, description: null, footer: null, issuer: null, metadata: {}, rendering_options: null } };
  const creation = params.object("invoice_creation");
  if (!creation) return off;
  creation.allowOnly(["enabled", "invoice_data"]);
  const enabled = creation.boolean("enabled");
  if (enabled === undefined) throw invalidParam(creation.name("enabled"), `Missing required param: ${creation.name("enabled")}.`, "parameter_missing");
  const data = creation.object("invoice_data");
  data?.allowOnly(["description", "footer", "metadata", "custom_fields"]);
  const customFields = data?.array("custom_fields", { maxItems: 4 }).map((f) => {
    f.allowOnly(["name", "value"]);
    return { name: f.requiredString("name", { max: 40 }), value: f.requiredString("value", { max: 140 }) };
  });
  return {
    enabled,
    invoice_data: {
      ...off.invoice_data,
      custom_fields: customFields?.length ? customFields : null,
      description: data?.nullableString("description", 1500) ?? null,
      footer: data?.nullableString("footer", 5000) ?? null,
      metadata: data ? applyMetadata({}, data.metadata()) : {},
    },
  };
}

/**
 * The post-payment invoice of a paid session with invoice_creation enabled: one line per session
 * line, finalised and marked paid (status paid, amount_paid = the session total), with the
 * customer's address and invoice custom fields as they are at payment time.
 */
function invoiceForPaidSession(ctx: Ctx, session: StripeObject): void {
  const creation = session.invoice_creation as { enabled: boolean; invoice_data: { custom_fields: Array<{ name: string; value: string }> | null; description: string | null; footer: string | null; metadata: Record<string, string> } };
  if (!creation.enabled || session.invoice || !session.customer) return;
  const customer = mustGet(ctx.store, "customers", session.customer as string);
  const invoice = baseInvoice(ctx, customer, {
    subscription: null,
    periodStart: ctx.now,
    periodEnd: ctx.now,
    billingReason: "manual",
    collectionMethod: "charge_automatically",
    daysUntilDue: null,
    description: creation.invoice_data.description,
    metadata: clone(creation.invoice_data.metadata),
    autoAdvance: false,
  });
  invoice.currency = session.currency;
  if (creation.invoice_data.custom_fields) invoice.custom_fields = clone(creation.invoice_data.custom_fields);
  invoice.footer = creation.invoice_data.footer;
  const lines = (ctx.store.data.session_line_items[session.id] ?? []).map((li) =>
    invoiceLine(invoice.id, {
      amount: li.amount_total as number,
      currency: li.currency,
      description: li.description,
      parent: null,
      period: { end: ctx.now, start: ctx.now },
      pricing: { price_details: { price: (li.price as StripeObject).id, product: (li.price as StripeObject).product }, type: "price_details", unit_amount_decimal: (li.price as StripeObject).unit_amount_decimal },
      quantity: li.quantity,
      quantity_decimal: String(li.quantity),
    }),
  );
  setInvoiceLines(invoice, lines);
  ctx.store.insert("invoices", invoice);
  session.invoice = invoice.id;
  ctx.emit("invoice.created", invoice);
  finalizeInvoiceObject(ctx, invoice);
  if (invoice.status !== "paid") markPaid(ctx, invoice, "open");
}

/** Open sessions past `expires_at` (on the fake clock) become expired when next touched, with their event. */
export function refreshExpiry(ctx: Ctx, session: StripeObject): StripeObject {
  if (session.status === "open" && ctx.now >= (session.expires_at as number)) {
    session.status = "expired";
    session.url = null;
    ctx.emit("checkout.session.expired", session, { status: "open" });
  }
  return session;
}

export function retrieveSession(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  return { body: refreshExpiry(ctx, mustGet(ctx.store, "checkout_sessions", id)) };
}

export function listSessions(ctx: Ctx, params: Params): HandlerResult {
  params.allowOnly(["limit", "starting_after", "ending_before", "customer", "payment_intent", "status", "created", "customer_details"]);
  const matches = fieldsEqual({ customer: params.string("customer"), payment_intent: params.string("payment_intent"), status: params.string("status", { oneOf: ["open", "complete", "expired"] }) });
  const created = createdFilter(params);
  const items = ctx.store
    .newestFirst("checkout_sessions")
    .map((s) => refreshExpiry(ctx, s))
    .filter((s) => matches(s) && created(s));
  return { body: paginate(items, params, "/v1/checkout/sessions", "checkout.session") };
}

export function listSessionLineItems(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly(["limit", "starting_after", "ending_before"]);
  mustGet(ctx.store, "checkout_sessions", id);
  // Line items keep the order they were given in, as Stripe lists them.
  const items = ctx.store.data.session_line_items[id] ?? [];
  return { body: paginate(items, params, `/v1/checkout/sessions/${id}/line_items`, "line item") };
}

export function expireSession(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  const session = refreshExpiry(ctx, mustGet(ctx.store, "checkout_sessions", id));
  if (session.status !== "open") {
    throw invalidRequest(`Only Checkout Sessions with a status in ["open"] can be expired. This Checkout Session has a status of "${String(session.status)}".`);
  }
  session.status = "expired";
  session.url = null;
  ctx.emit("checkout.session.expired", session, { status: "open" });
  return { body: session };
}

export type PagePaymentResult =
  | { kind: "paid"; session: StripeObject; redirect: string }
  | { kind: "declined"; session: StripeObject; outcome: Extract<CardOutcome, { ok: false }>; paymentIntent: StripeObject }
  | { kind: "not_open"; session: StripeObject };

function paymentIntentFor(ctx: Ctx, session: StripeObject): StripeObject {
  const existingId = ctx.store.data.session_payment_intents[session.id];
  if (existingId) return mustGet(ctx.store, "payment_intents", existingId);
  const extra = ctx.store.data.session_intent_data[session.id] ?? { metadata: {}, description: null };
  const pi: StripeObject = {
    id: newId("pi", 24),
    object: "payment_intent",
    amount: session.amount_total,
    amount_capturable: 0,
    amount_received: 0,
    automatic_payment_methods: null,
    canceled_at: null,
    cancellation_reason: null,
    capture_method: "automatic_async",
    client_secret: null,
    confirmation_method: "automatic",
    created: ctx.now,
    currency: session.currency,
    customer: session.customer,
    description: extra.description,
    last_payment_error: null,
    latest_charge: null,
    livemode: false,
    metadata: extra.metadata,
    next_action: null,
    payment_method: null,
    payment_method_types: ["card"],
    status: "requires_payment_method",
  };
  pi.client_secret = `${pi.id}_secret_${newId("x", 24).slice(2)}`;
  ctx.store.insert("payment_intents", pi);
  ctx.store.data.session_payment_intents[session.id] = pi.id;
  return pi;
}

/** What the hosted page's form does: charge the test card, complete the session or record the decline. */
export function payFromHostedPage(ctx: Ctx, sessionId: string, form: { cardNumber: string; email?: string }): PagePaymentResult {
  const session = refreshExpiry(ctx, mustGet(ctx.store, "checkout_sessions", sessionId));
  if (session.status !== "open") return { kind: "not_open", session };
  const outcome = cardOutcome(form.cardNumber);
  const pi = paymentIntentFor(ctx, session);
  const digits = normalizeCardNumber(form.cardNumber).replace(/\D/g, "");
  const pm = ctx.store.insert("payment_methods", paymentMethodObject(ctx, newId("pm", 24), digits.padStart(4, "0"), null));
  if (!outcome.ok) {
    pi.last_payment_error = {
      type: "card_error",
      code: outcome.code,
      ...(outcome.declineCode ? { decline_code: outcome.declineCode } : {}),
      message: outcome.message,
      payment_method: clone(pm),
    };
    pi.payment_method = null;
    pi.status = "requires_payment_method";
    ctx.emit("payment_intent.payment_failed", pi);
    return { kind: "declined", session, outcome, paymentIntent: pi };
  }
  pi.status = "succeeded";
  pi.amount_received = pi.amount;
  pi.payment_method = pm.id;
  pi.last_payment_error = null;
  const charge = createCharge(ctx, pi, "succeeded");
  const email = form.email?.trim() || (session.customer_email as string | null) || (session.customer_details as { email?: string } | null)?.email || null;
  if (!session.customer && session.customer_creation === "always") {
    // Checkout makes the customer from what was entered on the page.
    const created = ctx.store.insert("customers", newCustomerObject(ctx, { email }));
    ctx.emit("customer.created", created);
    session.customer = created.id;
    pi.customer = created.id;
  }
  session.status = "complete";
  session.payment_status = "paid";
  session.payment_intent = pi.id;
  session.url = null;
  session.customer_details = { address: null, email, name: (session.customer_details as { name?: string } | null)?.name ?? null, phone: null, tax_exempt: "none", tax_ids: [] };
  ctx.emit("payment_intent.succeeded", pi);
  invoiceForPaidSession(ctx, session);
  ctx.emit("checkout.session.completed", session);
  const disputeReason = DISPUTED_CARDS[digits];
  if (disputeReason) openDispute(ctx, charge.id, { reason: disputeReason });
  const redirect = (session.success_url as string).replace(/\{CHECKOUT_SESSION_ID\}/g, session.id);
  return { kind: "paid", session, redirect };
}

/**
 * Stripe's published test bank accounts for US bank account (ACH) debits, a delayed method: the
 * session completes at once with `payment_status: "unpaid"` and the PaymentIntent `processing`; the
 * money settles (or bounces) later, when `checkout.session.async_payment_succeeded` / `…_failed`
 * follow. Routing number 110000000 in test mode.
 */
export const TEST_BANK_ACCOUNTS: Record<string, { settles: true } | { settles: false; code: string; message: string }> = {
  "000123456789": { settles: true },
  "000111111116": { settles: false, code: "no_account", message: "The customer's bank account could not be located." },
  "000111111113": { settles: false, code: "account_closed", message: "The customer's bank account has been closed." },
};

export type DelayedPaymentResult =
  | { kind: "processing"; session: StripeObject; redirect: string }
  | { kind: "invalid"; session: StripeObject; message: string }
  | { kind: "not_open"; session: StripeObject };

/** The hosted page paid by a test bank account: the session completes unpaid and settles on `settleDelayedPayments`. */
export function payByBankFromHostedPage(ctx: Ctx, sessionId: string, form: { accountNumber: string; email?: string }): DelayedPaymentResult {
  const session = refreshExpiry(ctx, mustGet(ctx.store, "checkout_sessions", sessionId));
  if (session.status !== "open") return { kind: "not_open", session };
  const account = form.accountNumber.replace(/[\s-]/g, "");
  if (!TEST_BANK_ACCOUNTS[account]) return { kind: "invalid", session, message: `account_number: use a test bank account (${Object.keys(TEST_BANK_ACCOUNTS).join(", ")}).` };
  const pi = paymentIntentFor(ctx, session);
  const pm = ctx.store.insert("payment_methods", {
    ...paymentMethodObject(ctx, newId("pm", 24), "0000", null),
    card: null,
    type: "us_bank_account",
    us_bank_account: { account_holder_type: "company", account_type: "checking", bank_name: "STRIPE TEST BANK", last4: account.slice(-4), routing_number: "110000000" },
  });
  pi.status = "processing";
  pi.payment_method = pm.id;
  pi.payment_method_types = ["card", "us_bank_account"];
  pi.last_payment_error = null;
  createCharge(ctx, pi, "pending");
  ctx.store.data.delayed_payments ??= {};
  ctx.store.data.delayed_payments[pi.id] = account;
  const email = form.email?.trim() || (session.customer_email as string | null) || (session.customer_details as { email?: string } | null)?.email || null;
  session.status = "complete";
  session.payment_status = "unpaid";
  session.payment_intent = pi.id;
  session.url = null;
  session.customer_details = { address: null, email, name: (session.customer_details as { name?: string } | null)?.name ?? null, phone: null, tax_exempt: "none", tax_ids: [] };
  ctx.emit("payment_intent.processing", pi);
  ctx.emit("checkout.session.completed", session);
  return { kind: "processing", session, redirect: (session.success_url as string).replace(/\{CHECKOUT_SESSION_ID\}/g, session.id) };
}

/** Settles every processing bank debit (Stripe does this days later; the fake when told): events as Stripe sends them. */
export function settleDelayedPayments(ctx: Ctx): Array<{ session: string; paymentIntent: string; outcome: "succeeded" | "failed" }> {
  const settled: Array<{ session: string; paymentIntent: string; outcome: "succeeded" | "failed" }> = [];
  const pending = ctx.store.data.delayed_payments ?? {};
  for (const [piId, account] of Object.entries(pending)) {
    const pi = ctx.store.get("payment_intents", piId);
    const sessionId = Object.entries(ctx.store.data.session_payment_intents).find(([, id]) => id === piId)?.[0];
    delete pending[piId];
    if (!pi || !sessionId || pi.status !== "processing") continue;
    const session = mustGet(ctx.store, "checkout_sessions", sessionId);
    const bank = TEST_BANK_ACCOUNTS[account];
    const charge = pi.latest_charge ? ctx.store.get("charges", pi.latest_charge as string) : undefined;
    if (charge) settleCharge(charge, bank?.settles ? { ok: true } : { ok: false, code: bank && !bank.settles ? bank.code : "payment_method_provider_decline", message: bank && !bank.settles ? bank.message : "The payment failed." });
    if (bank?.settles) {
      pi.status = "succeeded";
      pi.amount_received = pi.amount;
      session.payment_status = "paid";
      ctx.emit("payment_intent.succeeded", pi);
      invoiceForPaidSession(ctx, session);
      ctx.emit("checkout.session.async_payment_succeeded", session, { payment_status: "unpaid" });
      settled.push({ session: session.id, paymentIntent: pi.id, outcome: "succeeded" });
    } else {
      const failure = bank && !bank.settles ? bank : { code: "payment_method_provider_decline", message: "The payment failed." };
      pi.status = "requires_payment_method";
      pi.last_payment_error = { type: "invalid_request_error", code: failure.code, message: failure.message, payment_method: clone(ctx.store.get("payment_methods", pi.payment_method as string) ?? null) };
      ctx.emit("payment_intent.payment_failed", pi);
      ctx.emit("checkout.session.async_payment_failed", session);
      settled.push({ session: session.id, paymentIntent: pi.id, outcome: "failed" });
    }
  }
  return settled;
}

export function retrievePaymentIntent(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly(["client_secret"]);
  return { body: mustGet(ctx.store, "payment_intents", id) };
}

export function retrievePaymentMethod(ctx: Ctx, params: Params, id: string): HandlerResult {
  params.allowOnly([]);
  return { body: mustGet(ctx.store, "payment_methods", id) };
}
