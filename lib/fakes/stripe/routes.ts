import "server-only";
import type { Ctx, HandlerResult } from "./context";
import type { Params } from "./params";
import * as billing from "./resources/billing";
import * as catalog from "./resources/catalog";
import * as checkout from "./resources/checkout";
import * as events from "./resources/events";
import * as payments from "./resources/payments";

type Handler = (ctx: Ctx, params: Params, ...ids: string[]) => HandlerResult;

interface Route {
  method: "GET" | "POST" | "DELETE";
  pattern: RegExp;
  handler: Handler;
}

const ID = "([^/]+)";

function route(method: Route["method"], path: string, handler: Handler): Route {
  return { method, pattern: new RegExp(`^${path.replace(/:id/g, ID)}$`), handler };
}

/** Every Stripe API endpoint the fake serves; the README lists the same table. */
export const ROUTES: Route[] = [
  route("POST", "/v1/customers", catalog.createCustomer),
  route("GET", "/v1/customers", catalog.listCustomers),
  route("GET", "/v1/customers/search", catalog.searchCustomers),
  route("GET", "/v1/customers/:id", catalog.retrieveCustomer),
  route("POST", "/v1/customers/:id", catalog.updateCustomer),
  route("DELETE", "/v1/customers/:id", catalog.deleteCustomer),

  route("POST", "/v1/products", catalog.createProduct),
  route("GET", "/v1/products", catalog.listProducts),
  route("GET", "/v1/products/:id", catalog.retrieveProduct),
  route("POST", "/v1/products/:id", catalog.updateProduct),

  route("POST", "/v1/prices", catalog.createPrice),
  route("GET", "/v1/prices", catalog.listPrices),
  route("GET", "/v1/prices/:id", catalog.retrievePrice),
  route("POST", "/v1/prices/:id", catalog.updatePrice),

  route("POST", "/v1/checkout/sessions", checkout.createSession),
  route("GET", "/v1/checkout/sessions", checkout.listSessions),
  route("GET", "/v1/checkout/sessions/:id", checkout.retrieveSession),
  route("GET", "/v1/checkout/sessions/:id/line_items", checkout.listSessionLineItems),
  route("POST", "/v1/checkout/sessions/:id/expire", checkout.expireSession),
  route("GET", "/v1/payment_intents/:id", checkout.retrievePaymentIntent),
  route("GET", "/v1/payment_methods/:id", checkout.retrievePaymentMethod),

  route("GET", "/v1/charges/:id", payments.retrieveCharge),
  route("POST", "/v1/refunds", payments.createRefund),
  route("GET", "/v1/refunds", payments.listRefunds),
  route("GET", "/v1/refunds/:id", payments.retrieveRefund),
  route("GET", "/v1/disputes", payments.listDisputes),
  route("GET", "/v1/disputes/:id", payments.retrieveDispute),

  route("POST", "/v1/billing/meters", billing.createMeter),
  route("GET", "/v1/billing/meters", billing.listMeters),
  route("GET", "/v1/billing/meters/:id", billing.retrieveMeter),
  route("POST", "/v1/billing/meters/:id", billing.updateMeter),
  route("POST", "/v1/billing/meters/:id/deactivate", (ctx, p, id) => billing.setMeterActive(ctx, p, id, false)),
  route("POST", "/v1/billing/meters/:id/reactivate", (ctx, p, id) => billing.setMeterActive(ctx, p, id, true)),
  route("GET", "/v1/billing/meters/:id/event_summaries", billing.listEventSummaries),
  route("POST", "/v1/billing/meter_events", billing.createMeterEvent),

  route("POST", "/v1/subscriptions", billing.createSubscription),
  route("GET", "/v1/subscriptions", billing.listSubscriptions),
  route("GET", "/v1/subscriptions/:id", billing.retrieveSubscription),
  route("POST", "/v1/subscriptions/:id", billing.updateSubscription),
  route("DELETE", "/v1/subscriptions/:id", billing.cancelSubscription),

  route("POST", "/v1/invoiceitems", billing.createInvoiceItem),
  route("GET", "/v1/invoiceitems", billing.listInvoiceItems),
  route("GET", "/v1/invoiceitems/:id", billing.retrieveInvoiceItem),

  route("POST", "/v1/invoices", billing.createInvoice),
  route("GET", "/v1/invoices", billing.listInvoices),
  route("GET", "/v1/invoices/:id", billing.retrieveInvoice),
  route("GET", "/v1/invoices/:id/lines", billing.listInvoiceLines),
  route("POST", "/v1/invoices/:id/finalize", billing.finalizeInvoice),
  route("POST", "/v1/invoices/:id/pay", billing.payInvoice),
  route("POST", "/v1/invoices/:id/void", billing.voidInvoice),
  route("POST", "/v1/invoices/:id/mark_uncollectible", billing.markUncollectible),

  route("GET", "/v1/events", events.listEvents),
  route("GET", "/v1/events/:id", events.retrieveEvent),
  route("POST", "/v1/webhook_endpoints", events.createWebhookEndpoint),
  route("GET", "/v1/webhook_endpoints", events.listWebhookEndpoints),
  route("GET", "/v1/webhook_endpoints/:id", events.retrieveWebhookEndpoint),
  route("POST", "/v1/webhook_endpoints/:id", events.updateWebhookEndpoint),
  route("DELETE", "/v1/webhook_endpoints/:id", events.deleteWebhookEndpoint),
];

export function matchRoute(method: string, path: string): { handler: Handler; ids: string[] } | { pathKnown: boolean } {
  let pathKnown = false;
  for (const r of ROUTES) {
    const m = r.pattern.exec(path);
    if (!m) continue;
    pathKnown = true;
    if (r.method === method) return { handler: r.handler, ids: m.slice(1).map((s) => decodeURIComponent(s)) };
  }
  return { pathKnown };
}
