/** Server start: the Stripe client (test mode or the local fake), the catalog, and the meter-event outbox handler. */
import path from "node:path";
import type { Db } from "@/db/client";
import { dataDir } from "@/db/client";
import { appBaseUrl } from "@/lib/auth/config";
import { ensureCatalog } from "./catalog";
import { registerMeterEventHandler } from "./meter";
import { startFinanceReconcile } from "./finance-ops";
import { startCheckoutReconcile } from "./payments";
import { billingConfig, configureBilling, fakeStripeClient, stripeFakePort, usesStripeFake } from "./stripe";
import { HANDLED_EVENT_TYPES } from "./webhook";

export const WEBHOOK_PATH = "/api/v1/stripe/webhook";

export async function startBilling(db: Db): Promise<string> {
  registerMeterEventHandler(db);
  if (!usesStripeFake()) {
    const config = billingConfig();
    await ensureCatalog(config.stripe);
    await startCheckoutReconcile(db);
    await startFinanceReconcile(db);
    return "billing uses Stripe (STRIPE_SECRET_KEY)";
  }
  const { ensureStripeFake } = await import("@/lib/fakes/stripe");
  const fake = await ensureStripeFake({
    port: stripeFakePort(),
    webhookUrl: `${appBaseUrl()}${WEBHOOK_PATH}`,
    webhookEvents: [...HANDLED_EVENT_TYPES],
    store: path.join(dataDir(), "stripe-fake.json"),
  });
  const stripe = fakeStripeClient(fake.port);
  configureBilling({ stripe, webhookSecret: fake.webhookSecret!, mode: "fake", fakeUrl: fake.url });
  await ensureCatalog(stripe);
  await startCheckoutReconcile(db);
  await startFinanceReconcile(db);
  return `local Stripe fake on ${fake.url}; payment page and webhooks to ${appBaseUrl()}${WEBHOOK_PATH}`;
}
