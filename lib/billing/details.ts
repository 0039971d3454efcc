/**
 * A studio's billing details: the billing e-mail, the postal address and a tax ID, printed on every
 * invoice issued after they are saved (Stripe copies the customer's address and invoice custom
 * fields onto each invoice when it is made). Owners edit them; owners and finance read them.
 * Kickdrift computes no tax: the tax ID is printed as given, and prices are before tax.
 */
import "server-only";
import { eq } from "drizzle-orm";
import type Stripe from "stripe";
import { z } from "@/lib/zod";
import type { Db } from "@/db/client";
import { studioBilling, type BillingAddress, type User } from "@/db/schema";
import { writeAudit } from "@/lib/audit/audit";
import { ensureStudioCustomer } from "./catalog";
import { stripeFailure } from "./stripe";

/** The invoice custom field that carries the tax ID (Stripe: custom field names ≤ 40 characters, values ≤ 140). */
export const TAX_ID_FIELD_NAME = "Tax ID";
export const TAX_ID_MAX = 40;
/**
 * Tax IDs are free text, checked only for length and characters (letters, digits, space, . - /):
 * formats differ per country (VAT, EIN, GST, ABN …) and Kickdrift validates none of them.
 */
const TAX_ID_PATTERN = /^[A-Za-z0-9][A-Za-z0-9 .\-/]*$/;

const text = (field: string, max: number) =>
  z
    .string({ error: `${field} must be text` })
    .trim()
    .min(1, { error: `${field} is required` })
    .max(max, { error: `${field} must be at most ${max} characters` });
const optionalText = (field: string, max: number) =>
  z
    .string({ error: `${field} must be text` })
    .trim()
    .max(max, { error: `${field} must be at most ${max} characters` })
    .nullable()
    .optional()
    .transform((v) => (v ? v : null));

export const billingDetailsSchema = z.strictObject({
  billingEmail: z
    .email({ error: "billingEmail must be an e-mail address" })
    .max(254, { error: "billingEmail must be at most 254 characters" })
    .nullable()
    .optional()
    .transform((v) => v ?? null),
  address: z
    .strictObject({
      line1: text("address.line1", 200),
      line2: optionalText("address.line2", 200),
      city: text("address.city", 100),
      state: optionalText("address.state", 100),
      postalCode: text("address.postalCode", 20),
      country: z
        .string({ error: "address.country must be text" })
        .trim()
        .regex(/^[A-Za-z]{2}$/, { error: "address.country must be a two-letter country code (ISO 3166-1 alpha-2), e.g. DE" })
        .transform((v) => v.toUpperCase()),
    })
    .nullable()
    .optional()
    .transform((v) => v ?? null),
  taxId: z
    .string({ error: "taxId must be text" })
    .trim()
    .max(TAX_ID_MAX, { error: `taxId must be at most ${TAX_ID_MAX} characters` })
    .refine((v) => v === "" || TAX_ID_PATTERN.test(v), { error: "taxId may use letters, digits, spaces and . - / only, starting with a letter or digit" })
    .nullable()
    .optional()
    .transform((v) => (v ? v : null)),
});
export type BillingDetailsInput = z.output<typeof billingDetailsSchema>;

export interface BillingDetails {
  billingEmail: string | null;
  address: BillingAddress | null;
  taxId: string | null;
  /** Where invoices go when no billing e-mail is set: the Stripe customer's e-mail (the first owner's). */
  taxNote: string;
}

const TAX_NOTE = "Prices are before tax; Kickdrift computes no tax. The tax ID is printed on invoices as entered and is not validated.";

export async function billingDetails(db: Db, studioId: string): Promise<BillingDetails> {
  const [row] = await db.select().from(studioBilling).where(eq(studioBilling.studioId, studioId));
  return { billingEmail: row?.billingEmail ?? null, address: row?.billingAddress ?? null, taxId: row?.taxId ?? null, taxNote: TAX_NOTE };
}

/**
 * Saves the details and passes them to the Stripe customer (e-mail, address, the "Tax ID" invoice
 * custom field) first: if Stripe refuses or is down, nothing is stored and the owner is told (502/503).
 * Invoices already issued keep what they were issued with.
 */
export async function updateBillingDetails(db: Db, stripe: Stripe, actor: Pick<User, "id" | "email">, studioId: string, input: BillingDetailsInput): Promise<BillingDetails> {
  const before = await billingDetails(db, studioId);
  try {
    const account = await ensureStudioCustomer(db, stripe, studioId);
    const a = input.address;
    await stripe.customers.update(
      account.stripeCustomerId,
      {
        // No billing e-mail: the customer keeps the owner's address it was made with.
        ...(input.billingEmail ? { email: input.billingEmail } : {}),
        address: a ? { line1: a.line1, line2: a.line2 ?? "", city: a.city, state: a.state ?? "", postal_code: a.postalCode, country: a.country } : "",
        invoice_settings: { custom_fields: input.taxId ? [{ name: TAX_ID_FIELD_NAME, value: input.taxId }] : "" },
      },
    );
  } catch (error) {
    throw stripeFailure(error);
  }
  await db.transaction(async (tx) => {
    await tx.update(studioBilling).set({ billingEmail: input.billingEmail, billingAddress: input.address, taxId: input.taxId }).where(eq(studioBilling.studioId, studioId));
    await writeAudit(tx, {
      actor,
      studioId,
      action: "billing.details",
      subjectType: "studio",
      subjectId: studioId,
      before: { billingEmail: before.billingEmail, address: before.address, taxId: before.taxId },
      after: { billingEmail: input.billingEmail, address: input.address, taxId: input.taxId },
    });
  });
  return billingDetails(db, studioId);
}
