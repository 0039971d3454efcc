/** Server start: the Stripe client (test mode, or the local fake the boot started), the catalog, and the meter-event outbox handler. */
import "server-only";
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
import { OVERDUE_GRACE_DAYS } from "./packs";

export const WEBHOOK_PATH = "/api/v1/stripe/webhook";

/** What the boot passes to the local Stripe fake it starts (demo, development and tests only). */
export function stripeFakeOptions() {
  return {
    port: stripeFakePort(),
    webhookUrl: `${appBaseUrl()}${WEBHOOK_PATH}`,
    webhookEvents: [...HANDLED_EVENT_TYPES],
    store: path.join(dataDir(), "stripe-fake.json"),
    // Stripe's overdue-invoice automation set to the grace period, as the live account must be (README).
    overdueNoticeDays: OVERDUE_GRACE_DAYS,
  };
}

/** A local Stripe fake the boot started, as billing needs to know it. */
export interface LocalStripe {
  port: number;
  url: string;
  webhookSecret: string | null;
}

/**
 * Billing at server start: Stripe test mode with STRIPE_SECRET_KEY; otherwise the local fake the boot
 * started and passes in (billing never starts or imports a fake itself).
 */
export async function startBilling(db: Db, localStripe?: LocalStripe): Promise<string> {
  registerMeterEventHandler(db);
  if (!usesStripeFake()) {
    const config = billingConfig();
    await ensureCatalog(config.stripe);
    await startCheckoutReconcile(db);
    await startFinanceReconcile(db);
    return "billing uses Stripe (STRIPE_SECRET_KEY)";
  }
  if (!localStripe?.webhookSecret) throw new Error("no STRIPE_SECRET_KEY and no local Stripe fake was started");
  const stripe = fakeStripeClient(localStripe.port);
  configureBilling({ stripe, webhookSecret: localStripe.webhookSecret, mode: "fake", fakeUrl: localStripe.url });
  await ensureCatalog(stripe);
  await startCheckoutReconcile(db);
  await startFinanceReconcile(db);
  return `local Stripe fake on ${localStripe.url}; payment page and webhooks to ${appBaseUrl()}${WEBHOOK_PATH}`;
}
