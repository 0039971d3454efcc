import "server-only";
import { createServer, type IncomingMessage, type ServerResponse } from "node:http";
import type { AddressInfo, Socket } from "node:net";
import { clone, expand, mustGet, recordEvent, type Ctx } from "./context";
import { authenticationError, idempotencyMismatch, invalidRequest, serviceUnavailable, StripeFakeError, type StripeErrorBody } from "./errors";
import { FormParseError, parseForm, type FormObject } from "./form";
import { renderClosedPage, renderMissingPage, renderPaymentPage } from "./hosted-page";
import { renderInvoiceMissingPage, renderInvoicePage, renderInvoicePdf } from "./invoice-document";
import { Params } from "./params";
import { closePeriod, closeSubscriptionPeriod, emitOverdueInvoices, finalizeDueDrafts, nextDraftDeadline, nextPeriodBoundary, payInvoiceFromHostedPage, type ClosePeriodOptions } from "./resources/billing";
import { paymentMethodObject } from "./resources/catalog";
import { closeDispute, openDispute } from "./resources/payments";
import { payByBankFromHostedPage, payFromHostedPage, refreshExpiry, settleDelayedPayments } from "./resources/checkout";
import { insertWebhookEndpoint } from "./resources/events";
import { matchRoute } from "./routes";
import { newId, StripeFakeStore, type Delivery, type DeliveryAttempt, type StripeObject } from "./store";
import { cardOutcome } from "./cards";
import { DEFAULT_RETRY_DELAYS_MS, WebhookDispatcher } from "./webhooks";

/** The API version the installed SDK (stripe@23.1.0) pins; events carry it unless an endpoint asks otherwise. */
export const DEFAULT_API_VERSION = "2026-10-28.endive";
/** Stripe finalises a subscription's renewal invoice about one hour after creating it as a draft. */
export const DEFAULT_DRAFT_WINDOW_S = 3600;
const MAX_BODY_BYTES = 1024 * 1024;

export interface StripeFakeOptions {
  /** 0 (default) picks a free port. */
  port?: number;
  host?: string;
  /** A webhook endpoint created at start (if the store does not have one for this URL yet). */
  webhookUrl?: string;
  webhookSecret?: string;
  webhookEvents?: string[];
  /** A JSON file to persist state to (survives restarts), or a store object to share. */
  store?: string | StripeFakeStore;
  apiVersion?: string;
  /** Back-off before each webhook retry, ms; attempts = length + 1. */
  webhookRetryDelaysMs?: number[];
  webhookTimeoutMs?: number;
  /** Base URL printed in Checkout `url`s when the fake is reached through another address. */
  publicUrl?: string;
  /**
   * Days after an invoice's due date that invoice.overdue is sent (Stripe: "X number of days after an
   * invoice becomes due", X set in the account's automations). Default 0.
   */
  overdueNoticeDays?: number;
  /**
   * Seconds a renewal invoice stays a draft before it is finalised and charged (Stripe: about one
   * hour; `automatically_finalizes_at`). Default 3600; tests compress it; 0 finalises at the period's end.
   */
  draftWindowSeconds?: number;
}

export type OutageMode = "unavailable" | "reset";

export interface StripeFake {
  url: string;
  port: number;
  store: StripeFakeStore;
  /** The secret of the endpoint made from `webhookUrl`, for `stripe.webhooks.constructEvent`. */
  webhookSecret: string | null;
  webhookEndpointId: string | null;
  close(): Promise<void>;
  /** Fake-clock time, unix seconds. */
  now(): number;
  advanceClock(to: number): { now: number; invoices: StripeObject[] };
  /** Starts the fake clock at `to` (unix s), in the past too, while the store has no customer; it then moves forward only. */
  startClock(to: number): { now: number };
  closePeriod(opts?: ClosePeriodOptions): StripeObject[];
  setOutage(down: boolean, mode?: OutageMode): void;
  resendEvent(eventId: string, endpointId?: string): Promise<Array<{ endpoint: string } & DeliveryAttempt>>;
  deliverEvents(eventIds: string[], endpointId?: string): Promise<Array<{ event: string; endpoint: string } & DeliveryAttempt>>;
  deliveries(eventId?: string): Delivery[];
  /** Waits until every due webhook has been attempted (`includeRetries`: until none is pending at all). */
  waitForWebhooks(opts?: { includeRetries?: boolean; timeoutMs?: number }): Promise<void>;
  /** Puts a test card on file as the customer's default payment method (what auto-charged invoices use). */
  setDefaultCard(customerId: string, cardNumber: string): StripeObject;
  /** Settles every processing bank debit paid on the hosted page (async_payment_succeeded / …_failed). */
  settleDelayedPayments(): Array<{ session: string; paymentIntent: string; outcome: "succeeded" | "failed" }>;
  /** The cardholder's bank disputes a charge (charge.dispute.created). */
  openDispute(chargeId: string, opts?: { amount?: number; reason?: string }): StripeObject;
  /** Decides a dispute (charge.dispute.closed with status lost or won). */
  closeDispute(disputeId: string, outcome: "lost" | "won"): StripeObject;
  /** Sends these events all at once (one attempt each, not awaiting one before the next), as Stripe may. */
  deliverConcurrently(eventIds: string[], endpointId?: string): Promise<Array<{ event: string; endpoint: string } & DeliveryAttempt>>;
}

function requestId(): string {
  return newId("req", 14);
}

function readBody(req: IncomingMessage): Promise<string> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    let size = 0;
    req.on("data", (chunk: Buffer) => {
      size += chunk.length;
      if (size > MAX_BODY_BYTES) {
        reject(invalidRequest(`Request body is larger than ${MAX_BODY_BYTES} bytes.`));
        req.destroy();
        return;
      }
      chunks.push(chunk);
    });
    req.on("end", () => resolve(Buffer.concat(chunks).toString("utf8")));
    req.on("error", reject);
  });
}

/** Stable fingerprint of a request, for idempotency comparisons: method, path and parameters with sorted keys. */
function fingerprint(method: string, path: string, params: FormObject): string {
  const sort = (v: unknown): unknown => {
    if (Array.isArray(v)) return v.map(sort);
    if (v && typeof v === "object") return Object.fromEntries(Object.keys(v).sort().map((k) => [k, sort((v as Record<string, unknown>)[k])]));
    return v;
  };
  return `${method} ${path} ${JSON.stringify(sort(params))}`;
}

function apiKeyOf(req: IncomingMessage): string | null {
  const header = req.headers.authorization;
  if (!header) return null;
  const bearer = /^Bearer\s+(.+)$/i.exec(header);
  if (bearer) return bearer[1].trim();
  const basic = /^Basic\s+(.+)$/i.exec(header);
  if (basic) return Buffer.from(basic[1], "base64").toString("utf8").split(":")[0];
  return null;
}

function redactKey(key: string): string {
  return key.length > 12 ? `${key.slice(0, 8)}${"*".repeat(key.length - 12)}${key.slice(-4)}` : "****";
}

export async function startStripeFake(options: StripeFakeOptions = {}): Promise<StripeFake> {
  const store = options.store instanceof StripeFakeStore ? options.store : new StripeFakeStore(options.store);
  const apiVersion = options.apiVersion ?? DEFAULT_API_VERSION;
  const overdueNoticeDays = options.overdueNoticeDays ?? 0;
  if (!Number.isInteger(overdueNoticeDays) || overdueNoticeDays < 0) throw new RangeError(`overdueNoticeDays must be a whole number of days >= 0; got ${overdueNoticeDays}`);
  const draftWindowS = options.draftWindowSeconds ?? DEFAULT_DRAFT_WINDOW_S;
  if (!Number.isInteger(draftWindowS) || draftWindowS < 0) throw new RangeError(`draftWindowSeconds must be a whole number of seconds >= 0; got ${draftWindowS}`);
  let outage: { down: boolean; mode: OutageMode } = { down: false, mode: "unavailable" };
  const sockets = new Set<Socket>();
  let baseUrl = "";

  const persist = () => store.persist();
  const dispatcher = new WebhookDispatcher(store, {
    retryDelaysMs: options.webhookRetryDelaysMs ?? DEFAULT_RETRY_DELAYS_MS,
    timeoutMs: options.webhookTimeoutMs ?? 10_000,
    onChange: persist,
  });

  const makeCtx = (meta: { requestId: string | null; idempotencyKey: string | null }): Ctx => {
    const now = store.now();
    return {
      store,
      now,
      requestId: meta.requestId,
      idempotencyKey: meta.idempotencyKey,
      baseUrl: options.publicUrl ?? baseUrl,
      apiVersion,
      emit(type, object, previous) {
        const { event } = recordEvent(store, { now, requestId: meta.requestId, idempotencyKey: meta.idempotencyKey, apiVersion }, type, object, previous);
        return event;
      },
    };
  };

  const send = (res: ServerResponse, status: number, body: string, headers: Record<string, string>) => {
    res.writeHead(status, { "request-id": requestId(), "content-length": String(Buffer.byteLength(body)), ...headers });
    res.end(body);
  };

  const sendJson = (res: ServerResponse, status: number, body: unknown, headers: Record<string, string> = {}) =>
    send(res, status, JSON.stringify(body, null, 2), { "content-type": "application/json", ...headers });

  const errorBody = (err: StripeFakeError): { error: StripeErrorBody } => ({ error: err.body });

  async function handleApi(req: IncomingMessage, res: ServerResponse, url: URL): Promise<void> {
    const reqId = requestId();
    const method = (req.method ?? "GET").toUpperCase();
    const stripeVersion = (req.headers["stripe-version"] as string | undefined) ?? apiVersion;
    const idempotencyKey = method === "POST" ? ((req.headers["idempotency-key"] as string | undefined) ?? null) : null;
    const headers: Record<string, string> = { "request-id": reqId, "stripe-version": stripeVersion };
    if (idempotencyKey) headers["idempotency-key"] = idempotencyKey;

    if (outage.down) {
      if (outage.mode === "reset") {
        req.socket.destroy();
        return;
      }
      const err = serviceUnavailable();
      sendJson(res, err.status, errorBody(err), headers);
      return;
    }
    try {
      const apiKey = apiKeyOf(req);
      if (!apiKey) {
        throw authenticationError(
          "You did not provide an API key. You need to provide your API key in the Authorization header, using Bearer auth (e.g. 'Authorization: Bearer YOUR_SECRET_KEY').",
        );
      }
      if (!apiKey.startsWith("sk_test_") || apiKey.length < 12) throw authenticationError(`Invalid API Key provided: ${redactKey(apiKey)}`);
      if (idempotencyKey !== null && idempotencyKey.length > 255) {
        throw invalidRequest("Idempotency-Key must be at most 255 characters long.");
      }
      const contentType = String(req.headers["content-type"] ?? "");
      const rawBody = method === "GET" ? "" : await readBody(req);
      if (rawBody && contentType && !contentType.startsWith("application/x-www-form-urlencoded")) {
        throw invalidRequest(`Invalid request: the v1 API takes application/x-www-form-urlencoded bodies (got ${contentType}).`);
      }
      let raw: FormObject;
      try {
        raw = { ...parseForm(url.search.slice(1)), ...parseForm(rawBody) };
      } catch (e) {
        if (e instanceof FormParseError) throw invalidRequest(e.message, e.param);
        throw e;
      }
      const scopeKey = idempotencyKey ? `${apiKey}\u0000${idempotencyKey}` : null;
      const print = fingerprint(method, url.pathname, raw);
      if (scopeKey) {
        const saved = store.data.idempotency[scopeKey];
        if (saved) {
          if (saved.fingerprint !== print) throw idempotencyMismatch(idempotencyKey as string);
          send(res, saved.status, saved.body, { "content-type": "application/json", ...headers, "idempotent-replayed": "true", "original-request": saved.request_id });
          return;
        }
      }
      const matched = matchRoute(method, url.pathname);
      if (!("handler" in matched)) {
        throw new StripeFakeError(404, {
          type: "invalid_request_error",
          message: `Unrecognized request URL (${method}: ${url.pathname}). The local Stripe fake serves the endpoints listed in lib/fakes/stripe/README.md.`,
        });
      }
      const params = new Params(raw);
      const expandPaths = params.stringArray("expand") ?? [];
      const ctx = makeCtx({ requestId: reqId, idempotencyKey });
      const seqBefore = store.data.seq;
      let status = 200;
      let text: string;
      const snapshot = method === "GET" ? null : store.snapshot();
      try {
        const result = matched.handler(ctx, params, ...matched.ids);
        status = result.status ?? 200;
        text = JSON.stringify(expand(store, result.body, expandPaths), null, 2);
      } catch (err) {
        // A failure after partial work (e.g. line item 0 made a product, line item 1 was invalid) leaves no trace,
        // except card declines, which Stripe records (the attempt, its events) and saves for the idempotency key.
        if (snapshot && !(err instanceof StripeFakeError && err.saveForIdempotency)) store.restore(snapshot);
        if (err instanceof StripeFakeError && err.saveForIdempotency && scopeKey) {
          store.data.idempotency[scopeKey] = { fingerprint: print, status: err.status, body: JSON.stringify(errorBody(err), null, 2), created: ctx.now, request_id: reqId };
        }
        throw err;
      }
      if (scopeKey) store.data.idempotency[scopeKey] = { fingerprint: print, status, body: text, created: ctx.now, request_id: reqId };
      if (method !== "GET" || store.data.seq !== seqBefore) persist();
      send(res, status, text, { "content-type": "application/json", ...headers });
      dispatcher.kick();
    } catch (err) {
      if (err instanceof StripeFakeError) {
        persist();
        sendJson(res, err.status, errorBody(err), headers);
        dispatcher.kick();
        return;
      }
      const message = err instanceof Error ? err.message : String(err);
      sendJson(res, 500, { error: { type: "api_error", message: `Local Stripe fake internal error: ${message}` } }, headers);
    }
  }

  /** hosted_invoice_url (/i/:id) and invoice_pdf (/i/:id/pdf): only for finalised invoices, as Stripe sets them at finalisation. */
  async function handleInvoiceDocument(req: IncomingMessage, res: ServerResponse, invoiceId: string, pdf: boolean): Promise<void> {
    const invoice = store.get("invoices", invoiceId);
    const html = (status: number, body: string) => send(res, status, body, { "content-type": "text/html; charset=utf-8" });
    if (!invoice || !invoice.hosted_invoice_url || (req.method !== "GET" && !(req.method === "POST" && !pdf))) return html(404, renderInvoiceMissingPage(invoiceId));
    if (req.method === "POST") {
      // The hosted page's card form: pay the amount remaining, then show the page again (paid, or the refusal).
      const form = parseForm(await readBody(req));
      const cardNumber = typeof form.card_number === "string" ? form.card_number : "";
      if (!cardNumber.trim()) return html(400, renderInvoicePage(invoice, { code: "parameter_missing", message: "card_number is required: enter a card number (test card 4242 4242 4242 4242)." }));
      const ctx = makeCtx({ requestId: null, idempotencyKey: null });
      const result = payInvoiceFromHostedPage(ctx, invoiceId, cardNumber);
      persist();
      dispatcher.kick();
      if (result.kind === "declined") return html(402, renderInvoicePage(result.invoice, { code: result.outcome.code, declineCode: result.outcome.declineCode, message: result.outcome.message }));
      // Post/redirect/get: a reload of the paid page does not post the card again.
      res.writeHead(303, { location: `/i/${encodeURIComponent(invoiceId)}`, "content-length": "0", "request-id": requestId() });
      res.end();
      return;
    }
    if (!pdf) return send(res, 200, renderInvoicePage(invoice), { "content-type": "text/html; charset=utf-8" });
    const bytes = Buffer.from(await renderInvoicePdf(invoice));
    res.writeHead(200, {
      "content-type": "application/pdf",
      "content-length": String(bytes.length),
      "content-disposition": `inline; filename="${String(invoice.number ?? invoice.id).replace(/[^A-Za-z0-9_-]/g, "_")}.pdf"`,
      "request-id": requestId(),
    });
    res.end(bytes);
  }

  async function handleHostedPage(req: IncomingMessage, res: ServerResponse, sessionId: string): Promise<void> {
    const html = (status: number, body: string) => send(res, status, body, { "content-type": "text/html; charset=utf-8" });
    const session = store.get("checkout_sessions", sessionId);
    if (!session) return html(404, renderMissingPage(sessionId));
    const lineItems = store.data.session_line_items[sessionId] ?? [];
    const ctx = makeCtx({ requestId: null, idempotencyKey: null });
    if (req.method === "GET") {
      refreshExpiry(ctx, session);
      persist();
      dispatcher.kick();
      return session.status === "open" ? html(200, renderPaymentPage(session, lineItems)) : html(session.status === "expired" ? 410 : 200, renderClosedPage(session));
    }
    if (req.method !== "POST") return html(405, renderMissingPage(sessionId));
    const form = parseForm(await readBody(req));
    const wantsJson = String(req.headers.accept ?? "").includes("application/json");
    const cardNumber = typeof form.card_number === "string" ? form.card_number : "";
    const accountNumber = typeof form.account_number === "string" ? form.account_number : "";
    if (accountNumber.trim() && !cardNumber.trim()) {
      // A delayed method: the session completes unpaid; money settles on settleDelayedPayments.
      const bank = payByBankFromHostedPage(ctx, sessionId, { accountNumber, email: typeof form.email === "string" ? form.email : undefined });
      persist();
      dispatcher.kick();
      if (bank.kind === "processing") {
        if (wantsJson) return sendJson(res, 200, { redirect: bank.redirect, session: bank.session });
        res.writeHead(303, { location: bank.redirect, "content-length": "0", "request-id": requestId() });
        res.end();
        return;
      }
      if (bank.kind === "invalid") {
        if (wantsJson) return sendJson(res, 400, { error: { type: "invalid_request_error", code: "parameter_invalid", param: "account_number", message: bank.message } });
        return html(400, renderPaymentPage(session, lineItems, { code: "parameter_invalid", message: bank.message }));
      }
      if (wantsJson) return sendJson(res, 409, { error: { type: "invalid_request_error", code: "checkout_session_not_open", message: `This Checkout Session is ${String(bank.session.status)}.` } });
      return html(bank.session.status === "expired" ? 410 : 409, renderClosedPage(bank.session));
    }
    if (!cardNumber.trim() && session.status === "open") {
      const message = "card_number is required: enter a card number (test card 4242 4242 4242 4242).";
      if (wantsJson) return sendJson(res, 400, { error: { type: "invalid_request_error", code: "parameter_missing", param: "card_number", message } });
      return html(400, renderPaymentPage(session, lineItems, { code: "parameter_missing", message }));
    }
    const result = payFromHostedPage(ctx, sessionId, { cardNumber, email: typeof form.email === "string" ? form.email : undefined });
    persist();
    dispatcher.kick();
    if (result.kind === "paid") {
      if (wantsJson) return sendJson(res, 200, { redirect: result.redirect, session: result.session });
      res.writeHead(303, { location: result.redirect, "content-length": "0", "request-id": requestId() });
      res.end();
      return;
    }
    if (result.kind === "not_open") {
      if (wantsJson) return sendJson(res, 409, { error: { type: "invalid_request_error", code: "checkout_session_not_open", message: `This Checkout Session is ${String(result.session.status)}.` } });
      return html(result.session.status === "expired" ? 410 : 409, renderClosedPage(result.session));
    }
    const { outcome } = result;
    if (wantsJson) {
      return sendJson(res, 402, {
        error: { type: "card_error", code: outcome.code, ...(outcome.declineCode ? { decline_code: outcome.declineCode } : {}), message: outcome.message, payment_intent: clone(result.paymentIntent) },
      });
    }
    return html(402, renderPaymentPage(session, lineItems, outcome));
  }

  // Drafts are finalised when their time comes on the running clock too, not only on a clock advance.
  let draftTimer: ReturnType<typeof setTimeout> | null = null;
  let stopped = false;
  const scheduleDrafts = () => {
    if (draftTimer) clearTimeout(draftTimer);
    draftTimer = null;
    if (stopped) return;
    const at = nextDraftDeadline(makeCtx({ requestId: null, idempotencyKey: null }), Number.MAX_SAFE_INTEGER);
    if (at === null) return;
    // The fake clock reads floor(wall seconds) + offset, so `at` is reached at wall time (at - offset) s.
    const delayMs = Math.min(2_147_000_000, Math.max(0, (at - store.data.clock_offset_s) * 1000 - Date.now() + 5));
    draftTimer = setTimeout(() => {
      draftTimer = null;
      if (stopped) return;
      const ctx = makeCtx({ requestId: null, idempotencyKey: null });
      if (finalizeDueDrafts(ctx).length > 0) {
        emitOverdueInvoices(ctx, overdueNoticeDays);
        persist();
        dispatcher.kick();
      }
      scheduleDrafts();
    }, delayMs);
    draftTimer.unref();
  };

  const control = {
    startClock(to: number) {
      if (!Number.isSafeInteger(to)) throw invalidRequest("to must be a unix timestamp in seconds", "to");
      try {
        store.startClockAt(to);
      } catch (error) {
        throw invalidRequest((error as Error).message, "to");
      }
      persist();
      return { now: store.now() };
    },
    advanceClock(to: number) {
      if (!Number.isSafeInteger(to)) throw invalidRequest("to must be a unix timestamp in seconds", "to");
      if (to < store.now()) throw invalidRequest(`to (${to}) is before the fake clock (${store.now()}); the clock only moves forward.`, "to");
      const invoices: StripeObject[] = [];
      // Cross each period boundary and each draft's finalisation in time order, like a test clock does:
      // a draft is finalised (and charged) before a later period closes.
      for (let guard = 0; guard < 10_000; guard++) {
        const probe = makeCtx({ requestId: null, idempotencyKey: null });
        const next = nextPeriodBoundary(probe, to);
        const draftAt = nextDraftDeadline(probe, to);
        if (!next && draftAt === null) break;
        if (draftAt !== null && (!next || draftAt <= next.end)) {
          store.advanceClockTo(draftAt);
          const ctx = makeCtx({ requestId: null, idempotencyKey: null });
          emitOverdueInvoices(ctx, overdueNoticeDays);
          finalizeDueDrafts(ctx);
          continue;
        }
        store.advanceClockTo(next!.end);
        const ctx = makeCtx({ requestId: null, idempotencyKey: null });
        emitOverdueInvoices(ctx, overdueNoticeDays);
        invoices.push(closeSubscriptionPeriod(ctx, next!.sub, next!.end, true, draftWindowS));
      }
      store.advanceClockTo(to);
      const ctx = makeCtx({ requestId: null, idempotencyKey: null });
      finalizeDueDrafts(ctx);
      emitOverdueInvoices(ctx, overdueNoticeDays);
      persist();
      dispatcher.kick();
      scheduleDrafts();
      return { now: store.now(), invoices };
    },
    closePeriod(opts: ClosePeriodOptions = {}) {
      const invoices = closePeriod(makeCtx({ requestId: null, idempotencyKey: null }), opts);
      persist();
      dispatcher.kick();
      return invoices;
    },
    openDispute(chargeId: string, opts: { amount?: number; reason?: string } = {}) {
      const dispute = openDispute(makeCtx({ requestId: null, idempotencyKey: null }), chargeId, opts);
      persist();
      dispatcher.kick();
      return dispute;
    },
    closeDispute(disputeId: string, outcome: "lost" | "won") {
      const dispute = closeDispute(makeCtx({ requestId: null, idempotencyKey: null }), disputeId, outcome);
      persist();
      dispatcher.kick();
      return dispute;
    },
    settleDelayedPayments() {
      const settled = settleDelayedPayments(makeCtx({ requestId: null, idempotencyKey: null }));
      persist();
      dispatcher.kick();
      return settled;
    },
    setDefaultCard(customerId: string, cardNumber: string) {
      const ctx = makeCtx({ requestId: null, idempotencyKey: null });
      const customer = mustGet(store, "customers", customerId, "customer");
      const outcome = cardOutcome(cardNumber);
      if (!outcome.ok && outcome.code === "incorrect_number") throw invalidRequest(outcome.message, "card");
      const pm = store.insert("payment_methods", paymentMethodObject(ctx, newId("pm", 24), cardNumber.replace(/\D/g, ""), customer.id));
      const previous = { invoice_settings: clone(customer.invoice_settings) };
      customer.invoice_settings = { ...(customer.invoice_settings as object), default_payment_method: pm.id };
      ctx.emit("payment_method.attached", pm);
      ctx.emit("customer.updated", customer, previous);
      persist();
      dispatcher.kick();
      return pm;
    },
  };

  async function handleControl(req: IncomingMessage, res: ServerResponse, url: URL): Promise<void> {
    const method = (req.method ?? "GET").toUpperCase();
    const rawBody = method === "GET" ? "" : await readBody(req);
    let body: Record<string, unknown> = {};
    try {
      body = rawBody.trim().startsWith("{") ? (JSON.parse(rawBody) as Record<string, unknown>) : (parseForm(rawBody) as Record<string, unknown>);
    } catch {
      return sendJson(res, 400, { error: { type: "invalid_request_error", message: "Control endpoints take a JSON object or a form body." } });
    }
    const num = (v: unknown) => (typeof v === "number" ? v : typeof v === "string" && v.trim() !== "" ? Number(v) : NaN);
    const bool = (v: unknown) => v === true || v === "true";
    const path = url.pathname;
    try {
      if (method === "GET" && path === "/_fake/health") return sendJson(res, 200, { ok: true, now: store.now(), outage });
      if (method === "POST" && path === "/_fake/start_clock") return sendJson(res, 200, control.startClock(num(body.to)));
      if (method === "POST" && path === "/_fake/advance_clock") return sendJson(res, 200, control.advanceClock(num(body.to)));
      if (method === "POST" && path === "/_fake/close_period") {
        const invoices = control.closePeriod({
          customer: typeof body.customer === "string" ? body.customer : undefined,
          subscription: typeof body.subscription === "string" ? body.subscription : undefined,
          finalize: body.finalize === undefined ? true : bool(body.finalize),
        });
        return sendJson(res, 200, { now: store.now(), invoices });
      }
      if (method === "POST" && path === "/_fake/outage") {
        const mode = body.mode === "reset" ? "reset" : "unavailable";
        if (body.down === undefined) throw invalidRequest("down is required (true or false)", "down");
        outage = { down: bool(body.down), mode };
        return sendJson(res, 200, { outage });
      }
      const resend = /^\/_fake\/events\/([^/]+)\/resend$/.exec(path);
      if (method === "POST" && resend) {
        if (!store.get("events", resend[1])) throw invalidRequest(`No such event: '${resend[1]}'`, "id", "resource_missing");
        return sendJson(res, 200, { attempts: await dispatcher.resend(resend[1], typeof body.endpoint === "string" ? body.endpoint : undefined) });
      }
      if (method === "POST" && path === "/_fake/deliver") {
        const ids = body.events;
        if (!Array.isArray(ids) || ids.some((x) => typeof x !== "string")) throw invalidRequest("events must be an array of event ids, in the order to deliver them", "events");
        for (const id of ids as string[]) if (!store.get("events", id)) throw invalidRequest(`No such event: '${id}'`, "events", "resource_missing");
        return sendJson(res, 200, { attempts: await dispatcher.deliverInOrder(ids as string[], typeof body.endpoint === "string" ? body.endpoint : undefined) });
      }
      const disputeCharge = /^\/_fake\/charges\/([^/]+)\/dispute$/.exec(path);
      if (method === "POST" && disputeCharge) {
        const amount = body.amount === undefined ? undefined : num(body.amount);
        return sendJson(res, 200, control.openDispute(disputeCharge[1], { amount, reason: typeof body.reason === "string" ? body.reason : undefined }));
      }
      const disputeClose = /^\/_fake\/disputes\/([^/]+)\/close$/.exec(path);
      if (method === "POST" && disputeClose) {
        if (body.status !== "lost" && body.status !== "won") throw invalidRequest("status must be lost or won", "status");
        return sendJson(res, 200, control.closeDispute(disputeClose[1], body.status));
      }
      if (method === "POST" && path === "/_fake/settle_delayed_payments") return sendJson(res, 200, { settled: control.settleDelayedPayments() });
      if (method === "POST" && path === "/_fake/deliver_concurrently") {
        const ids = body.events;
        if (!Array.isArray(ids) || ids.some((x) => typeof x !== "string")) throw invalidRequest("events must be an array of event ids, sent all at once", "events");
        for (const id of ids as string[]) if (!store.get("events", id)) throw invalidRequest(`No such event: '${id}'`, "events", "resource_missing");
        return sendJson(res, 200, { attempts: await dispatcher.deliverConcurrently(ids as string[], typeof body.endpoint === "string" ? body.endpoint : undefined) });
      }
      if (method === "GET" && path === "/_fake/deliveries") {
        const eventId = url.searchParams.get("event");
        return sendJson(res, 200, { deliveries: store.data.deliveries.filter((d) => !eventId || d.event === eventId) });
      }
      const card = /^\/_fake\/customers\/([^/]+)\/default_card$/.exec(path);
      if (method === "POST" && card) {
        if (typeof body.number !== "string") throw invalidRequest("number (a test card number) is required", "number");
        return sendJson(res, 200, control.setDefaultCard(card[1], body.number));
      }
      return sendJson(res, 404, { error: { type: "invalid_request_error", message: `No control endpoint ${method} ${path}` } });
    } catch (err) {
      if (err instanceof StripeFakeError) return sendJson(res, err.status, { error: err.body });
      const message = err instanceof Error ? err.message : String(err);
      return sendJson(res, 400, { error: { type: "invalid_request_error", message } });
    }
  }

  const server = createServer((req, res) => {
    const url = new URL(req.url ?? "/", "http://fake.local");
    const pay = /^\/c\/pay\/([^/]+)$/.exec(url.pathname);
    const invoicePage = /^\/i\/([^/]+)(\/pdf)?$/.exec(url.pathname);
    const work = url.pathname.startsWith("/v1/")
      ? handleApi(req, res, url)
      : pay
        ? handleHostedPage(req, res, decodeURIComponent(pay[1]))
        : invoicePage
          ? handleInvoiceDocument(req, res, decodeURIComponent(invoicePage[1]), Boolean(invoicePage[2]))
        : url.pathname.startsWith("/_fake/")
          ? handleControl(req, res, url)
          : Promise.resolve(sendJson(res, 404, { error: { type: "invalid_request_error", message: `Unrecognized request URL (${req.method}: ${url.pathname}).` } }));
    work.catch((err: unknown) => {
      if (!res.headersSent) {
        const status = err instanceof StripeFakeError ? err.status : 500;
        sendJson(res, status, { error: err instanceof StripeFakeError ? err.body : { type: "api_error", message: String(err) } });
      }
    });
  });
  server.on("connection", (socket) => {
    sockets.add(socket);
    socket.on("close", () => sockets.delete(socket));
  });

  const host = options.host ?? "127.0.0.1";
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port ?? 0, host, () => {
      server.off("error", reject);
      resolve();
    });
  });
  const port = (server.address() as AddressInfo).port;
  baseUrl = `http://${host}:${port}`;

  let webhookSecret: string | null = null;
  let webhookEndpointId: string | null = null;
  if (options.webhookUrl) {
    const existing = store.newestFirst("webhook_endpoints").find((we) => !we.deleted && we.url === options.webhookUrl && (!options.webhookSecret || we.secret === options.webhookSecret));
    const endpoint =
      existing ??
      insertWebhookEndpoint(
        { store, now: store.now() },
        { url: options.webhookUrl, enabledEvents: options.webhookEvents ?? ["*"], secret: options.webhookSecret, description: "configured by startStripeFake({ webhookUrl })" },
      );
    // A restarted app may act on more event types than when its endpoint was made: it subscribes to what it asks for now.
    if (existing && options.webhookEvents) existing.enabled_events = [...options.webhookEvents];
    webhookSecret = endpoint.secret as string;
    webhookEndpointId = endpoint.id;
    persist();
  }
  // Deliveries left pending by a previous run resume now, and drafts it left wait for their time.
  dispatcher.kick();
  scheduleDrafts();

  return {
    url: baseUrl,
    port,
    store,
    webhookSecret,
    webhookEndpointId,
    now: () => store.now(),
    advanceClock: control.advanceClock,
    startClock: control.startClock,
    closePeriod: control.closePeriod,
    setDefaultCard: control.setDefaultCard,
    settleDelayedPayments: control.settleDelayedPayments,
    openDispute: control.openDispute,
    closeDispute: control.closeDispute,
    deliverConcurrently: (eventIds, endpointId) => dispatcher.deliverConcurrently(eventIds, endpointId),
    setOutage(down, mode = "unavailable") {
      outage = { down, mode };
    },
    resendEvent: (eventId, endpointId) => dispatcher.resend(eventId, endpointId),
    deliverEvents: (eventIds, endpointId) => dispatcher.deliverInOrder(eventIds, endpointId),
    deliveries: (eventId) => store.data.deliveries.filter((d) => !eventId || d.event === eventId),
    waitForWebhooks: (opts) => dispatcher.idle(opts),
    async close() {
      stopped = true;
      if (draftTimer) clearTimeout(draftTimer);
      await dispatcher.stop();
      persist();
      await new Promise<void>((resolve) => {
        server.close(() => resolve());
        for (const s of sockets) s.destroy();
      });
    },
  };
}

const runningKey = Symbol.for("kickdrift.stripe-fake");
const processGlobal = globalThis as unknown as Record<symbol, Promise<StripeFake> | undefined>;

/**
 * Starts the fake once per process and hands back the same instance afterwards (hot reload and several
 * importers must not try to bind the port twice). A failed start is forgotten so a later call can retry.
 */
export function ensureStripeFake(options: StripeFakeOptions = {}): Promise<StripeFake> {
  const existing = processGlobal[runningKey];
  if (existing) return existing;
  const started = startStripeFake(options).then((fake) => {
    const close = fake.close;
    fake.close = async () => {
      if (processGlobal[runningKey] === started) processGlobal[runningKey] = undefined;
      await close();
    };
    return fake;
  });
  processGlobal[runningKey] = started;
  started.catch(() => {
    if (processGlobal[runningKey] === started) processGlobal[runningKey] = undefined;
  });
  return started;
}
