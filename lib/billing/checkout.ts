/** Buying a credit pack through Stripe Checkout; the webhook credits the ledger once it is paid. */
import "server-only";
import Stripe from "stripe";
import { z } from "@/lib/zod";
import type { Db } from "@/db/client";
import type { User } from "@/db/schema";
import { appBaseUrl } from "@/lib/auth/config";
import { ApiError } from "@/lib/errors";
import { ensureCatalog, ensureStudioCustomer } from "./catalog";
import { CREDIT_PACKS, findPack } from "./packs";
import { stripeFailure } from "./stripe";
import { PACK_INVOICE_KIND } from "./webhook";

export const MAX_PACKS_PER_CHECKOUT = 20;

export const checkoutSchema = z
  .object({
    packId: z.string().max(64),
    quantity: z
      .number()
      .int(`must be a whole number of packs`)
      .min(1, "must be at least 1")
      .max(MAX_PACKS_PER_CHECKOUT, `must be at most ${MAX_PACKS_PER_CHECKOUT}`)
      .default(1),
  })
  .strict();

export async function createCheckout(db: Db, stripe: Stripe, studioId: string, user: User, input: z.infer<typeof checkoutSchema>): Promise<{ sessionId: string; url: string }> {
  const pack = findPack(input.packId);
  if (!pack)
    throw new ApiError("validation_failed", `packId: no pack "${input.packId}"; choose one of ${CREDIT_PACKS.map((p) => p.id).join(", ")}.`, "packId");
  try {
    const catalog = await ensureCatalog(stripe);
    const account = await ensureStudioCustomer(db, stripe, studioId);
    const billing = `${appBaseUrl()}/studios/${encodeURIComponent(studioId)}/billing`;
    const session = await stripe.checkout.sessions.create({
      mode: "payment",
      customer: account.stripeCustomerId,
      client_reference_id: studioId,
      line_items: [{ price: catalog.packPrices[pack.id], quantity: input.quantity }],
      metadata: { studio_id: studioId, pack_id: pack.id, quantity: String(input.quantity), buyer_email: user.email },
      // A paid invoice for the purchase (hosted page and PDF), with the studio's billing address and
      // tax ID from the customer; mailed to the buyer, owners and finance when it is finalised.
      invoice_creation: {
        enabled: true,
        invoice_data: {
          description: `${pack.name} pack × ${input.quantity}: ${pack.minutes * input.quantity} Kickdrift compute minutes. Prices before tax; tax handling is out of scope.`,
          metadata: { kind: PACK_INVOICE_KIND, studio_id: studioId, pack_id: pack.id, quantity: String(input.quantity), buyer_email: user.email },
        },
      },
      success_url: `${billing}?checkout=success&session_id={CHECKOUT_SESSION_ID}`,
      cancel_url: `${billing}?checkout=cancelled`,
    });
    if (!session.url) throw new ApiError("payment_provider_error", "The payment provider returned no payment page.");
    return { sessionId: session.id, url: session.url };
  } catch (error) {
    throw stripeFailure(error);
  }
}
