/**
 * The success bodies of the billing routes (studio billing, checkout, ledger, usage, invoices, the
 * Stripe webhook's acknowledgement, admin refunds and the platform's finance view), kept apart from
 * ./responses.ts so billing fields are added in one place. Same rules: the JSON form of the lib/billing
 * return types, strict objects; ./responses-types.ts ties each schema to its lib type.
 */
import "server-only";
import { z } from "@/lib/zod";

const creditPackSchema = z.strictObject({ id: z.string(), name: z.string(), minutes: z.number(), priceCents: z.number(), currency: z.literal("usd"), summary: z.string() });
const paymentCheckSchema = z.strictObject({ sessionId: z.string(), state: z.enum(["failed", "credited", "processing", "open", "expired", "refused"]), amountCents: z.number(), creditedMs: z.number(), message: z.string() });
const invoicesSchema = z.strictObject({ invoices: z.array(z.strictObject({ id: z.string(), number: z.string().nullable(), status: z.string(), currency: z.string(), periodStart: z.string(), periodEnd: z.string(), quantityMs: z.number(), totalCents: z.number(), finalizedAt: z.string().nullable(), kind: z.enum(["overage", "pack"]), hostedInvoiceUrl: z.string().nullable(), invoicePdfUrl: z.string().nullable() })) });
const webhookResultSchema = z.strictObject({ received: z.literal(true), duplicate: z.boolean(), outcome: z.string() });
const unpaidInvoiceSchema = z.strictObject({ id: z.string(), number: z.string().nullable(), status: z.string(), totalCents: z.number(), dueAt: z.string(), overageOffAt: z.string(), overdue: z.boolean(), overageOff: z.boolean() });
const failedMeterEventSchema = z.strictObject({ outboxId: z.number(), studioId: z.string().nullable(), studioName: z.string().nullable(), identifier: z.string(), meterIdentifier: z.string().nullable(), valueMs: z.number(), timestamp: z.number(), attempts: z.number(), lastError: z.string().nullable(), createdAt: z.string() });
export const billingAnswer = z.strictObject({ balanceMs: z.number(), lowBalanceMs: z.number(), packs: z.array(creditPackSchema), overage: z.strictObject({ allowed: z.boolean(), permitted: z.boolean(), on: z.boolean(), held: z.boolean(), graceDays: z.number(), unpaidInvoices: z.array(unpaidInvoiceSchema), capMs: z.number(), centsPerMinute: z.number(), thisMonthMs: z.number() }), month: z.strictObject({ key: z.string(), usedMs: z.number(), capMs: z.number() }), taxNote: z.string() });
export const overageSwitchAnswer = z.strictObject({ permitted: z.boolean(), on: z.boolean(), allowed: z.boolean(), held: z.boolean(), capMs: z.number() });
export const checkoutAnswer = z.strictObject({ sessionId: z.string(), url: z.string() });
export const checkoutCheckAnswer = paymentCheckSchema;
export const ledgerAnswer = z.strictObject({ entries: z.array(z.strictObject({ id: z.number(), kind: z.enum(["purchase", "usage", "adjustment", "refund"]), computeMs: z.number(), overageMs: z.number(), amountCents: z.number(), sweepId: z.string().nullable(), chunkIndex: z.number().nullable(), memo: z.string(), createdAt: z.string() })), page: z.number(), pageSize: z.number(), total: z.number() });
export const usageAnswer = z.strictObject({ days: z.number(), byDay: z.array(z.strictObject({ day: z.string(), usedMs: z.number(), overageMs: z.number() })), bySweep: z.array(z.strictObject({ sweepId: z.string().nullable(), name: z.string(), usedMs: z.number() })), byMember: z.array(z.strictObject({ userId: z.string().nullable(), email: z.string(), usedMs: z.number() })) });
export const invoicesAnswer = invoicesSchema;
export const invoiceAnswer = z.strictObject({ invoice: z.strictObject({ id: z.string(), number: z.string().nullable(), status: z.string(), currency: z.string(), periodStart: z.string(), periodEnd: z.string(), quantityMs: z.number(), totalCents: z.number(), finalizedAt: z.string().nullable(), kind: z.enum(["overage", "pack"]), hostedInvoiceUrl: z.string().nullable(), invoicePdfUrl: z.string().nullable() }), lines: z.array(z.strictObject({ ledgerMs: z.number(), differenceMs: z.number(), reconciled: z.boolean(), entries: z.array(z.strictObject({ createdAt: z.string(), id: z.number(), sweepId: z.string().nullable(), chunkIndex: z.number().nullable(), overageMs: z.number() })), id: z.string(), description: z.string(), periodStart: z.number(), periodEnd: z.number(), quantityMs: z.number(), amountCents: z.number() })), reconciled: z.boolean() });
export const stripeWebhookAnswer = webhookResultSchema;
export const refundAnswer = z.strictObject({ refundId: z.string(), amountCents: z.number(), outcome: z.string() });
export const financeAnswer = z.strictObject({ periods: z.array(z.strictObject({ studioId: z.string(), studioName: z.string(), invoiceId: z.string(), number: z.string().nullable(), status: z.string(), periodStart: z.string(), periodEnd: z.string(), ledgerMs: z.number(), meteredMs: z.number(), invoicedMs: z.number(), totalCents: z.number(), reconciled: z.boolean() })), revenueByMonth: z.array(z.strictObject({ month: z.string(), packCents: z.number(), overageCents: z.number() })), failedMeterEvents: z.array(failedMeterEventSchema) });
export const meterRetryAnswer = z.strictObject({ outboxId: z.number(), state: z.enum(["queued", "unchanged"]), status: z.string(), meterIdentifier: z.string() });
const billingAddressSchema = z.strictObject({ line1: z.string(), line2: z.string().nullable(), city: z.string(), state: z.string().nullable(), postalCode: z.string(), country: z.string() });
export const billingDetailsAnswer = z.strictObject({ billingEmail: z.string().nullable(), address: billingAddressSchema.nullable(), taxId: z.string().nullable(), taxNote: z.string() });
const ledgerGroupSchema = z.strictObject({ group: z.string(), kind: z.string(), sweepId: z.string().nullable(), sweepName: z.string().nullable(), entries: z.number(), chunks: z.number(), computeMs: z.number(), overageMs: z.number(), amountCents: z.number(), firstAt: z.string(), lastAt: z.string(), memo: z.string().nullable() });
const ledgerEntryRowSchema = z.strictObject({ id: z.number(), createdAt: z.string(), kind: z.string(), sweepId: z.string().nullable(), sweepName: z.string().nullable(), chunkIndex: z.number().nullable(), computeMs: z.number(), overageMs: z.number(), amountCents: z.number(), memo: z.string() });
export const ledgerGroupsAnswer = z.strictObject({ groups: z.array(ledgerGroupSchema), page: z.number(), pageSize: z.number(), total: z.number() });
export const sweepLedgerAnswer = z.strictObject({ sweepId: z.string(), sweepName: z.string(), chunks: z.array(ledgerEntryRowSchema) });
/** format=json of the ledger export: the column list, each unit-bearing column's unit, and the rows (minutes and dollars as decimal strings). */
export const ledgerExportAnswer = z.strictObject({ studioId: z.string(), group: z.enum(["entry", "sweep"]), columns: z.array(z.string()), units: z.record(z.string(), z.string()), rows: z.array(z.record(z.string(), z.union([z.string(), z.number(), z.null()]))) });
