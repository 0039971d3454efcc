/**
 * Contract suite: the Stripe SDK calls Kickdrift's billing makes (lib/billing: catalog, customer,
 * billing details, overage subscription, meter events, late-usage invoice items, Checkout), made through
 * the app's own functions, checked for the answers the app relies on. It always runs against the local
 * Stripe fake. With STRIPE_SECRET_KEY=sk_test_… set (and CI unset) the same checks also run against
 * Stripe's own test mode — `npm run test:stripe-contract` — so what the fake assumes is pinned to
 * Stripe. Otherwise that half is skipped, and the reason is printed.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import Stripe from "stripe";
import { eq } from "drizzle-orm";
import type { Db } from "@/db/client";
import { studioBilling } from "@/db/schema";
import { startStripeFake, type StripeFake } from "@/lib/fakes/stripe";
import { ensureCatalog, ensureOverageSubscription, ensureStudioCustomer, METER_CUSTOMER_KEY, METER_EVENT_NAME, METER_VALUE_KEY } from "@/lib/billing/catalog";
import { updateBillingDetails } from "@/lib/billing/details";
import { CREDIT_PACKS, OVERAGE_UNIT_AMOUNT_DECIMAL } from "@/lib/billing/packs";
import { LATE_USAGE_METADATA_KEY } from "@/lib/billing/usage";
import { closeTestDb, useFreshDb } from "../../helpers/db";
import { makeSweepStudio } from "../sweeps/support";
import { stripeTestMode } from "./contract-target";

let db: Db;
let fake: StripeFake;
beforeAll(async () => {
  db = await useFreshDb();
  fake = await startStripeFake({ port: 0 });
});
afterAll(async () => {
  await fake.close();
  await closeTestDb();
});

const testMode = stripeTestMode(process.env);
if ("skip" in testMode) console.log(`[stripe-contract] Stripe test mode skipped: ${testMode.skip}`);

describe("which Stripe the contract suite calls", () => {
  it("Stripe's test mode only with an sk_test_ key and never in CI; otherwise a skip naming the reason", () => {
    expect(stripeTestMode({ STRIPE_SECRET_KEY: "sk_test_abc123" })).toEqual({ key: "sk_test_abc123" });
    expect(stripeTestMode({})).toMatchObject({ skip: expect.stringContaining("STRIPE_SECRET_KEY is not set") });
    expect(stripeTestMode({ STRIPE_SECRET_KEY: "sk_live_abc123" })).toMatchObject({ skip: expect.stringContaining("not a test-mode key") });
    expect(stripeTestMode({ STRIPE_SECRET_KEY: "sk_test_abc123", CI: "true" })).toMatchObject({ skip: expect.stringContaining("CI is set") });
  });
});

function contract(label: string, client: () => Stripe) {
  describe(`Stripe contract (${label})`, () => {
    it("the catalog is found or made once: pack prices by lookup key, the overage meter and its metered price", async () => {
      const stripe = client();
      const first = await ensureCatalog(stripe);
      const again = await ensureCatalog(stripe);
      expect(again).toEqual(first);
      for (const pack of CREDIT_PACKS) {
        const price = await stripe.prices.retrieve(first.packPrices[pack.id]);
        expect(price).toMatchObject({ unit_amount: pack.priceCents, currency: pack.currency, active: true });
      }
      const overage = await stripe.prices.retrieve(first.overagePriceId);
      expect(String(overage.unit_amount_decimal)).toBe(OVERAGE_UNIT_AMOUNT_DECIMAL);
      expect(overage.recurring).toMatchObject({ interval: "month", usage_type: "metered", meter: first.meterId });
      const meter = await stripe.billing.meters.retrieve(first.meterId);
      expect(meter).toMatchObject({ event_name: METER_EVENT_NAME, status: "active", default_aggregation: { formula: "sum" } });
    });

    it("a studio's customer, its billing details on the customer, and the overage subscription anchored to the 1st 00:00 UTC", async () => {
      const stripe = client();
      const s = await makeSweepStudio(`Contract Wharf ${label}`, 0);
      const account = await ensureStudioCustomer(db, stripe, s.studioId);
      // The creation carries an idempotency key: a second first use finds the same customer.
      await db.delete(studioBilling).where(eq(studioBilling.studioId, s.studioId));
      expect((await ensureStudioCustomer(db, stripe, s.studioId)).stripeCustomerId).toBe(account.stripeCustomerId);

      await updateBillingDetails(db, stripe, { id: s.owner.id, email: s.owner.email }, s.studioId, {
        billingEmail: "books@contract-wharf.test",
        address: { line1: "1 Quay Lane", line2: null, city: "Tórshavn", state: null, postalCode: "100", country: "FO" },
        taxId: "FO 123456",
      });
      const customer = (await stripe.customers.retrieve(account.stripeCustomerId)) as Stripe.Customer;
      expect(customer).toMatchObject({ email: "books@contract-wharf.test", address: { line1: "1 Quay Lane", city: "Tórshavn", postal_code: "100", country: "FO" }, metadata: { studio_id: s.studioId } });
      expect(customer.invoice_settings.custom_fields).toEqual([{ name: "Tax ID", value: "FO 123456" }]);

      const billing = await ensureOverageSubscription(db, stripe, s.studioId);
      const sub = await stripe.subscriptions.retrieve(billing.stripeSubscriptionId!);
      expect(sub).toMatchObject({ status: "active", collection_method: "send_invoice", days_until_due: 30, billing_cycle_anchor_config: { day_of_month: 1, hour: 0, minute: 0, second: 0 } });
      const end = new Date(sub.items.data[0].current_period_end * 1000);
      expect(end.toISOString()).toMatch(/-01T00:00:00\.000Z$/);

      // A meter event the app sends, and the same identifier again: Stripe refuses it as already existing
      // (the late-usage probe in lib/billing/meter.ts relies on that code).
      const identifier = `contract-${s.studioId}`;
      const payload = { [METER_CUSTOMER_KEY]: account.stripeCustomerId, [METER_VALUE_KEY]: "600000" };
      const timestamp = Math.floor(Date.now() / 1000) - 60;
      await stripe.billing.meterEvents.create({ event_name: METER_EVENT_NAME, identifier, timestamp, payload });
      const duplicate = await stripe.billing.meterEvents.create({ event_name: METER_EVENT_NAME, identifier, timestamp, payload }).then(() => null, (e: Stripe.errors.StripeError) => e);
      expect(duplicate).toMatchObject({ type: "StripeInvalidRequestError", code: "resource_already_exists", param: "identifier" });

      // Late usage: an invoice item on the subscription's next invoice naming its own period.
      const item = await stripe.invoiceItems.create({
        customer: account.stripeCustomerId,
        subscription: sub.id,
        currency: "usd",
        quantity: 600000,
        unit_amount_decimal: Stripe.Decimal.from(OVERAGE_UNIT_AMOUNT_DECIMAL),
        period: { start: sub.start_date - 86_400, end: sub.start_date },
        description: "Late overage (contract check)",
        metadata: { [LATE_USAGE_METADATA_KEY]: identifier },
      });
      // 600,000 ms × 0.00015 ¢ = 90 ¢ (arithmetic).
      expect(item).toMatchObject({ amount: 90, period: { start: sub.start_date - 86_400, end: sub.start_date }, metadata: { [LATE_USAGE_METADATA_KEY]: identifier } });
      await stripe.subscriptions.cancel(sub.id);
    });
  });
}

contract("local fake", () => new Stripe("sk_test_kickdrift_contract_fake", { host: "127.0.0.1", port: fake.port, protocol: "http", maxNetworkRetries: 0 }));
if ("key" in testMode) contract("Stripe test mode", () => new Stripe(testMode.key, { maxNetworkRetries: 2 }));
else describe.skip(`Stripe contract (Stripe test mode): ${testMode.skip}`, () => it("needs STRIPE_SECRET_KEY=sk_test_…", () => undefined));
