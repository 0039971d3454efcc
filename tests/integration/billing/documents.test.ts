/**
 * Issue #19, documents finance can book and one period everywhere: no overage subscription until
 * overage is turned on, its cycle anchored to the 1st of the month UTC; pack purchases invoiced
 * (Checkout invoice_creation) with a hosted page and a real PDF carrying the billing address and
 * tax ID; billing details validated and passed to the Stripe customer; the invoices CSV; read tokens.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq, like } from "drizzle-orm";
import { PDFDocument } from "pdf-lib";
import { extractText, getDocumentProxy } from "unpdf";
import { getDb, type Db } from "@/db/client";
import { invoices, outbox, studioBilling } from "@/db/schema";
import { createApiToken } from "@/lib/auth/api-tokens";
import { createOverageSubscription } from "@/lib/billing/meter";
import { findPack } from "@/lib/billing/packs";
import { OVERAGE_SUBSCRIPTION_KIND } from "@/lib/billing/usage";
import { OutboxDispatcher } from "@/lib/outbox/outbox";
import { MAIL_KIND } from "@/lib/outbox/mail";
import { updateQuotas } from "@/lib/quotas/admin";
import { METER_CUSTOMER_KEY, METER_EVENT_NAME, METER_VALUE_KEY } from "@/lib/billing/catalog";
import { POST as checkoutPost } from "@/app/api/v1/studios/[studioId]/billing/checkout/route";
import { GET as detailsGet, PUT as detailsPut } from "@/app/api/v1/studios/[studioId]/billing/details/route";
import { GET as invoicesGet } from "@/app/api/v1/studios/[studioId]/billing/invoices/route";
import { GET as ledgerGet } from "@/app/api/v1/studios/[studioId]/billing/ledger/route";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { call, errorOf } from "../../helpers/http";
import { makeSweepStudio, type TestStudio } from "../sweeps/support";
import { payOnHostedPage, startBillingHarness, waitUntil, type BillingHarness } from "./support";

let h: BillingHarness;
let db: Db;
let s: TestStudio;

beforeAll(async () => {
  await useFreshDb();
  db = await getDb();
  h = await startBillingHarness();
  s = await makeSweepStudio("Tern Quay Interactive", 0);
});
afterAll(async () => {
  await h.close();
  await closeTestDb();
});

const path = (tail = "") => `/api/v1/studios/${s.studioId}/billing${tail}`;

async function buyPack(packId: string): Promise<string> {
  const started = await call(checkoutPost, { method: "POST", path: path("/checkout"), params: { studioId: s.studioId }, body: { packId }, cookie: s.cookies.owner });
  expect(started.status, JSON.stringify(started.body)).toBe(201);
  const { sessionId } = started.body as { sessionId: string };
  expect((await payOnHostedPage(h.fake, sessionId, "4242 4242 4242 4242")).status).toBe(200);
  return sessionId;
}

async function invoiceOfSession(sessionId: string) {
  const session = await h.stripe.checkout.sessions.retrieve(sessionId);
  expect(typeof session.invoice).toBe("string");
  const id = session.invoice as string;
  await waitUntil(async () => (await db.select().from(invoices).where(eq(invoices.id, id))).some((r) => r.status === "paid" && r.hostedInvoiceUrl), `the mirrored invoice ${id}`);
  const [row] = await db.select().from(invoices).where(eq(invoices.id, id));
  return row;
}

/** The text a PDF draws, as a PDF reader extracts it (unpdf: Mozilla's PDF.js, through each font's ToUnicode map). */
async function pdfText(bytes: Uint8Array): Promise<string> {
  const { text } = await extractText(await getDocumentProxy(new Uint8Array(bytes)), { mergePages: true });
  return text;
}

function dispatcherFor(kind: string, handler: (row: never) => Promise<void>) {
  return new OutboxDispatcher({ db, handlers: { [kind]: handler as never } });
}

describe("one period everywhere: the overage subscription", () => {
  it("a pack purchase makes no overage subscription; turning overage on makes one, anchored to the 1st of the month UTC", async () => {
    await buyPack("pack_tapout");
    const [account] = await db.select().from(studioBilling).where(eq(studioBilling.studioId, s.studioId));
    expect(account.stripeSubscriptionId).toBeNull();
    expect((await h.stripe.subscriptions.list({ customer: account.stripeCustomerId })).data).toHaveLength(0);

    // An admin turns overage on, twice (a retried request): one queued creation.
    const admin = { id: s.owner.id, email: "admin@kickdrift.test" };
    await updateQuotas(db, admin, s.studioId, { overageAllowed: true, reason: "studio asked for overage" });
    await updateQuotas(db, admin, s.studioId, { overageAllowed: false, reason: "off again" });
    await updateQuotas(db, admin, s.studioId, { overageAllowed: true, reason: "on again" });
    const queued = await db.select().from(outbox).where(and(eq(outbox.studioId, s.studioId), eq(outbox.kind, OVERAGE_SUBSCRIPTION_KIND)));
    expect(queued).toHaveLength(1);
    await dispatcherFor(OVERAGE_SUBSCRIPTION_KIND, (row) => createOverageSubscription(db, h.stripe, row)).dispatchDue();

    const [after] = await db.select().from(studioBilling).where(eq(studioBilling.studioId, s.studioId));
    expect(after.stripeSubscriptionId).toMatch(/^sub_/);
    const sub = await h.stripe.subscriptions.retrieve(after.stripeSubscriptionId!);
    // Stripe API reference, billing_cycle_anchor_config: "the billing_cycle_anchor is set to the next
    // occurrence of the day_of_month at the hour, minute, and second UTC". Expected from the fake's clock.
    const now = new Date(sub.start_date * 1000);
    const thisFirst = Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), 1) / 1000;
    const nextFirst = Date.UTC(now.getUTCFullYear(), now.getUTCMonth() + 1, 1) / 1000;
    const anchor = thisFirst >= sub.start_date ? thisFirst : nextFirst;
    expect(sub.billing_cycle_anchor).toBe(anchor);
    expect(sub.billing_cycle_anchor_config).toMatchObject({ day_of_month: 1, hour: 0, minute: 0, second: 0 });
    const [item] = sub.items.data;
    expect(item.current_period_start).toBe(sub.start_date);
    expect(item.current_period_end).toBe(anchor === sub.start_date ? nextFirst : anchor);
    expect(after.subscriptionStartedAt!.getTime()).toBe(sub.start_date * 1000);

    // Usage in the short first period is invoiced at the anchor; the next period is the whole calendar month.
    await h.stripe.billing.meterEvents.create({ event_name: METER_EVENT_NAME, identifier: `docs-${s.studioId}`, timestamp: h.fake.now(), payload: { [METER_CUSTOMER_KEY]: after.stripeCustomerId, [METER_VALUE_KEY]: "600000" } });
    const firstEnd = item.current_period_end;
    h.fake.advanceClock(firstEnd);
    const [first] = (await h.stripe.invoices.list({ subscription: sub.id })).data;
    expect(first).toMatchObject({ period_start: sub.start_date, period_end: firstEnd });
    expect(new Date(first.period_end * 1000).toISOString()).toMatch(/-01T00:00:00\.000Z$/);
    const rolled = (await h.stripe.subscriptions.retrieve(sub.id)).items.data[0];
    const endDate = new Date(firstEnd * 1000);
    expect(rolled.current_period_start).toBe(firstEnd);
    expect(rolled.current_period_end).toBe(Date.UTC(endDate.getUTCFullYear(), endDate.getUTCMonth() + 1, 1) / 1000);
  });

  it("the fake refuses a bad anchor the way Stripe does, naming the parameter", async () => {
    const [account] = await db.select().from(studioBilling).where(eq(studioBilling.studioId, s.studioId));
    const price = (await h.stripe.prices.list({ lookup_keys: ["kickdrift_overage_ms_monthly"] })).data[0];
    const bad = await h.stripe.subscriptions
      .create({ customer: account.stripeCustomerId, items: [{ price: price.id }], billing_cycle_anchor_config: { day_of_month: 32 } })
      .then(() => null, (e: { param?: string; statusCode?: number }) => e);
    expect(bad).toMatchObject({ statusCode: 400, param: "billing_cycle_anchor_config[day_of_month]" });
    const both = await h.stripe.subscriptions
      .create({ customer: account.stripeCustomerId, items: [{ price: price.id }], billing_cycle_anchor: h.fake.now() + 60, billing_cycle_anchor_config: { day_of_month: 1 } })
      .then(() => null, (e: { param?: string; statusCode?: number }) => e);
    expect(both).toMatchObject({ statusCode: 400, param: "billing_cycle_anchor_config" });
  });
});

describe("billing details", () => {
  it("refuses bad details naming the field and the limit; finance may read but not edit; nothing is stored", async () => {
    const put = (body: unknown, cookie = s.cookies.owner) => call(detailsPut, { method: "PUT", path: path("/details"), params: { studioId: s.studioId }, body, cookie });
    const longTax = await put({ billingEmail: null, address: null, taxId: "A".repeat(41) });
    expect(longTax.status).toBe(400);
    expect(errorOf(longTax.body).issues?.[0]).toMatchObject({ field: "taxId" });
    expect(errorOf(longTax.body).issues?.[0].message).toContain("40");
    const badChars = await put({ taxId: "DE<script>" });
    expect(errorOf(badChars.body).issues?.[0]).toMatchObject({ field: "taxId" });
    const badCountry = await put({ address: { line1: "3 Pier Row", city: "Lübeck", postalCode: "23552", country: "Germany" } });
    expect(badCountry.status).toBe(400);
    expect(errorOf(badCountry.body).issues?.[0]).toMatchObject({ field: "address.country" });
    const badEmail = await put({ billingEmail: "not-an-address" });
    expect(errorOf(badEmail.body).issues?.[0]).toMatchObject({ field: "billingEmail" });
    expect((await put({ taxId: "DE123" }, s.cookies.finance)).status).toBe(403);
    const read = await call(detailsGet, { method: "GET", path: path("/details"), params: { studioId: s.studioId }, cookie: s.cookies.finance });
    expect(read.status).toBe(200);
    expect(read.body).toMatchObject({ billingEmail: null, address: null, taxId: null });
  });

  it("an owner's address, tax ID and billing e-mail reach the Stripe customer and the next pack invoice: hosted page, PDF and e-mail", async () => {
    const saved = await call(detailsPut, {
      method: "PUT",
      path: path("/details"),
      params: { studioId: s.studioId },
      cookie: s.cookies.owner,
      body: { billingEmail: "books@ternquay.test", address: { line1: "3 Pier Row", line2: null, city: "Lübeck", state: null, postalCode: "23552", country: "de" }, taxId: "DE 123/456-789" },
    });
    expect(saved.status, JSON.stringify(saved.body)).toBe(200);
    expect(saved.body).toMatchObject({ billingEmail: "books@ternquay.test", address: { country: "DE", city: "Lübeck" }, taxId: "DE 123/456-789" });
    const [account] = await db.select().from(studioBilling).where(eq(studioBilling.studioId, s.studioId));
    const customer = await h.stripe.customers.retrieve(account.stripeCustomerId);
    expect(customer).toMatchObject({ email: "books@ternquay.test", address: { line1: "3 Pier Row", city: "Lübeck", postal_code: "23552", country: "DE" }, invoice_settings: { custom_fields: [{ name: "Tax ID", value: "DE 123/456-789" }] } });

    const sessionId = await buyPack("pack_rebound");
    const row = await invoiceOfSession(sessionId);
    const pack = findPack("pack_rebound")!;
    // The pack table (lib/billing/packs.ts): 750 minutes for 4,500 ¢.
    expect(row).toMatchObject({ kind: "pack", status: "paid", totalCents: pack.priceCents, quantityMs: pack.minutes * 60_000 });
    expect(row.hostedInvoiceUrl).toBe(`${h.fake.url}/i/${row.id}`);
    expect(row.invoicePdfUrl).toBe(`${h.fake.url}/i/${row.id}/pdf`);

    const page = await fetch(row.hostedInvoiceUrl!);
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).toContain(`Invoice ${row.number}`);
    expect(html).toContain("3 Pier Row");
    expect(html).toContain("23552 Lübeck");
    expect(html).toContain("Tax ID: DE 123/456-789");
    expect(html).toContain("45.00 USD");

    const pdf = await fetch(row.invoicePdfUrl!);
    expect(pdf.status).toBe(200);
    expect(pdf.headers.get("content-type")).toBe("application/pdf");
    const bytes = new Uint8Array(await pdf.arrayBuffer());
    expect(Buffer.from(bytes.subarray(0, 5)).toString("latin1")).toBe("%PDF-");
    // Parsed back by pdf-lib (an independent reader of the file, not the writer's state).
    const parsed = await PDFDocument.load(bytes);
    expect(parsed.getPageCount()).toBe(1);
    expect(parsed.getTitle()).toBe(`Invoice ${row.number}`);
    const text = await pdfText(bytes);
    expect(text).toContain("Tax ID: DE 123/456-789");
    expect(text).toContain("3 Pier Row");
    expect(text).toContain("Total");
    expect(text).toContain("45.00 USD");
    // The same invoice gives the same document.
    expect(Buffer.from(new Uint8Array(await (await fetch(row.invoicePdfUrl!)).arrayBuffer())).equals(Buffer.from(bytes))).toBe(true);

    // Mailed once each to the buyer (an owner), finance and the billing e-mail, with both links; events again change nothing.
    const mailsOf = async () =>
      (await db.select().from(outbox).where(and(eq(outbox.kind, MAIL_KIND), like(outbox.idempotencyKey, `mail:invoice-finalized:${row.id}:%`)))).map((m) => m.payload as { to: string; text: string });
    await waitUntil(async () => (await mailsOf()).length >= 3, "the invoice mails");
    const events = (await h.stripe.events.list({ type: "invoice.*", limit: 100 })).data.filter((e) => (e.data.object as { id: string }).id === row.id).map((e) => e.id);
    await h.fake.deliverEvents(events);
    await h.fake.deliverConcurrently(events);
    const mails = await mailsOf();
    expect(mails.map((m) => m.to).sort()).toEqual([s.finance.email, s.owner.email, "books@ternquay.test"].sort());
    for (const m of mails) {
      expect(m.text).toContain(row.hostedInvoiceUrl!);
      expect(m.text).toContain(row.invoicePdfUrl!);
    }
  });

  it("an invoice before finalisation has no documents: the fake answers 404", async () => {
    const [account] = await db.select().from(studioBilling).where(eq(studioBilling.studioId, s.studioId));
    const draft = await h.stripe.invoices.create({ customer: account.stripeCustomerId });
    expect(draft.hosted_invoice_url).toBeNull();
    expect((await fetch(`${h.fake.url}/i/${draft.id}`)).status).toBe(404);
    expect((await fetch(`${h.fake.url}/i/${draft.id}/pdf`)).status).toBe(404);
  });
});

describe("invoices for bookkeeping", () => {
  it("the CSV names integer cents and the formatted amount; read tokens read invoices and the ledger, not billing details", async () => {
    const list = await call(invoicesGet, { method: "GET", path: path("/invoices"), params: { studioId: s.studioId }, cookie: s.cookies.finance });
    const rows = (list.body as { invoices: { id: string; totalCents: number; kind: string }[] }).invoices;
    expect(rows.length).toBeGreaterThanOrEqual(3);
    const csv = await call(invoicesGet, { method: "GET", path: path("/invoices?format=csv"), params: { studioId: s.studioId }, cookie: s.cookies.finance });
    expect(csv.status).toBe(200);
    expect(csv.res.headers.get("content-type")).toContain("text/csv");
    const text = csv.body as string;
    const [header, ...lines] = text.trim().split("\r\n");
    const columns = header.split(",");
    expect(columns).toContain("total_cents");
    expect(columns).toContain("total_amount");
    expect(columns).toContain("invoice_pdf_url");
    expect(lines).toHaveLength(rows.length);
    const at = (line: string, name: string) => line.split(",")[columns.indexOf(name)].replaceAll('"', "");
    const rebound = lines.find((l) => at(l, "total_cents") === "4500");
    expect(rebound).toBeDefined();
    expect(at(rebound!, "total_amount")).toBe("45.00");
    expect(at(rebound!, "currency")).toBe("USD");
    expect(at(rebound!, "kind")).toBe("pack");
    const bad = await call(invoicesGet, { method: "GET", path: path("/invoices?format=xml"), params: { studioId: s.studioId }, cookie: s.cookies.finance });
    expect(bad.status).toBe(400);
    expect(errorOf(bad.body).issues?.[0]).toMatchObject({ field: "format" });

    const { secret } = await createApiToken(s.studioId, s.owner, { name: "books export", scopes: ["read"] });
    const viaToken = await call(invoicesGet, { method: "GET", path: path("/invoices"), params: { studioId: s.studioId }, bearer: secret });
    expect(viaToken.status).toBe(200);
    expect((viaToken.body as { invoices: unknown[] }).invoices).toHaveLength(rows.length);
    expect((await call(ledgerGet, { method: "GET", path: path("/ledger"), params: { studioId: s.studioId }, bearer: secret })).status).toBe(200);
    expect((await call(detailsGet, { method: "GET", path: path("/details"), params: { studioId: s.studioId }, bearer: secret })).status).toBe(403);
    expect((await call(invoicesGet, { method: "GET", path: path("/invoices"), params: { studioId: s.studioId }, cookie: s.cookies.engineer })).status).toBe(403);
  });
});
