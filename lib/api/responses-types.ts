/**
 * Compile-time ties between each success-body schema (./responses.ts, ./responses-billing.ts) and the
 * type of what the route answers, built from the lib/ functions the route calls: `npx tsc` fails when
 * either side gains, loses or retypes a field without the other. JSON form: a Date becomes its ISO
 * string, a field that may be undefined becomes optional. Types only; nothing here runs.
 */
import type { output, ZodType } from "zod";
import type { listAudit } from "@/lib/audit/audit";
import type { platformFinance, invoiceDetail, listInvoices, ledgerPage, billingSummary, usageBreakdown } from "@/lib/billing/queries";
import type { adminQueue, adjustCredit, adminStudioDetail, listAdjustments, studioQuotaView, updateQuotas, setStudioStatus, adminStudioList, setPlatformRole } from "@/lib/quotas/admin";
import type { adminRefund } from "@/lib/billing/refunds";
import type { allUsers } from "@/lib/studios/studios";
import type { listCapturedMail } from "@/lib/mail/mailbox";
import type { acceptInvite, describeInvite, listInvites, createInvite } from "@/lib/studios/invites";
import type { endUserSessions } from "@/lib/auth/user-sessions";
import type { handleStripeEvent } from "@/lib/billing/webhook";
import type { checkPayment } from "@/lib/billing/payments";
import type { createCheckout } from "@/lib/billing/checkout";
import type { checkView, listChecks, quoteCheck, catalogueDetail, listCatalogues } from "@/lib/catalogues/store";
import type { CATALOGUE_LIMITS } from "@/lib/catalogues/format";
import type { changeRole } from "@/lib/studios/members";
import type { studioOverview } from "@/lib/studios/overview";
import type { quoteSweep } from "@/lib/queue/submit";
import type { snapshotDetail, snapshotSweepSpec, listSnapshots } from "@/lib/snapshots/store";
import type { SNAPSHOT_LIMITS } from "@/lib/snapshots/format";
import type { sweepView } from "@/lib/queue/views";
import type { sweepCreators } from "@/lib/queue/api";
import type { envelopeDocument } from "@/lib/sweeps/envelope";
import type { withContactTuning } from "@/lib/sweeps/contact-tuning";
import type { revokeApiToken, tokenView } from "@/lib/auth/api-tokens";
import type { resendDelivery, listDeliveries, listEndpoints, createEndpoint } from "@/lib/webhooks/webhooks";
import type * as A from "./responses";
import type * as B from "./responses-billing";

type R<F extends (...args: never[]) => unknown> = Awaited<ReturnType<F>>;
type UndefinedKeys<T> = { [K in keyof T]-?: unknown extends T[K] ? never : undefined extends T[K] ? K : never }[keyof T];
/** The type JSON.stringify makes of T, as the client reads it back. */
type Jsonify<T> = T extends Date
  ? string
  : T extends readonly (infer U)[]
    ? Jsonify<U>[]
    : T extends object
      ? { [K in Exclude<keyof T, UndefinedKeys<T>>]: Jsonify<T[K]> } & { [K in UndefinedKeys<T>]?: Jsonify<Exclude<T[K], undefined>> }
      : T;
/** Compiles only when every answer of type Lib is accepted by the schema's type … */
type Accepts<Schema extends Lib, Lib> = Schema;
/** … and every value of the schema's type is one the lib can give (no field it never sends, none missing). */
type Gives<Lib extends Schema, Schema> = Lib;
type Out<S extends ZodType> = output<S>;

type Signup = Jsonify<{ accepted: true; message: string }>;
type PasswordReset = Jsonify<{ ok: true }>;
type MeSessions = Jsonify<{ ended: R<typeof endUserSessions> }>;
type Token = Jsonify<{ token: R<typeof tokenView> & { studioId: string } }>;
type Invite = Jsonify<{ invite: R<typeof describeInvite> }>;
type InviteAccept = Jsonify<{ studio: R<typeof acceptInvite> }>;
type DevMail = Jsonify<{ messages: R<typeof listCapturedMail> }>;
type MemberPatch = Jsonify<{ member: R<typeof changeRole> }>;
type MemberDelete = Jsonify<{ removed: { userId: string } }>;
type Invites = Jsonify<{ invites: R<typeof listInvites> }>;
type InvitePost = Jsonify<{ invite: Pick<R<typeof createInvite>["invite"], "id" | "email" | "role" | "expiresAt">; mailSent: R<typeof createInvite>["mailSent"] }>;
type InviteDelete = Jsonify<{ deleted: { id: string } }>;
type Overview = Jsonify<{ overview: R<typeof studioOverview> }>;
type Webhooks = Jsonify<{ endpoints: R<typeof listEndpoints> }>;
type WebhookPost = Jsonify<R<typeof createEndpoint>>;
type WebhookDelete = Jsonify<{ removed: string }>;
type Deliveries = Jsonify<{ deliveries: R<typeof listDeliveries> }>;
type Resend = Jsonify<{ delivery: R<typeof resendDelivery> }>;
type TokenDelete = Jsonify<{ token: R<typeof revokeApiToken> }>;
type Quote = Jsonify<{ quote: R<typeof quoteSweep> }>;
type Sweeps = Jsonify<{ sweeps: (R<typeof sweepView> & { createdBy: { id: string; name: string } | null })[]; page: number; pageSize: number; total: number; creators: R<typeof sweepCreators> }>;
type Sweep = Jsonify<{ sweep: R<typeof sweepView> }>;
type Envelope = Jsonify<{ envelope: ReturnType<typeof withContactTuning>; document: ReturnType<typeof envelopeDocument> }>;
type Catalogues = Jsonify<{ catalogues: R<typeof listCatalogues>; limits: typeof CATALOGUE_LIMITS }>;
type CataloguePost = Jsonify<{ catalogue: R<typeof catalogueDetail> & { notes: unknown } }>;
type Catalogue = Jsonify<{ catalogue: R<typeof catalogueDetail>; checks: R<typeof listChecks> }>;
type CheckQuote = Jsonify<{ quote: R<typeof quoteCheck>["quote"]; settings: R<typeof quoteCheck>["settings"] }>;
type Checks = Jsonify<{ checks: R<typeof listChecks> }>;
type Check = Jsonify<{ check: R<typeof checkView> }>;
type Snapshots = Jsonify<{ snapshots: R<typeof listSnapshots>; limits: typeof SNAPSHOT_LIMITS }>;
type SnapshotPost = Jsonify<{ snapshot: R<typeof snapshotDetail> }>;
type Snapshot = Jsonify<{ snapshot: R<typeof snapshotDetail>; sweepSpec: ReturnType<typeof snapshotSweepSpec> }>;
type Billing = Jsonify<R<typeof billingSummary>>;
type Checkout = Jsonify<R<typeof createCheckout>>;
type CheckoutCheck = Jsonify<R<typeof checkPayment>>;
type Ledger = Jsonify<R<typeof ledgerPage>>;
type Usage = Jsonify<R<typeof usageBreakdown>>;
type Invoices = Jsonify<{ invoices: R<typeof listInvoices> }>;
type Invoice = Jsonify<R<typeof invoiceDetail>>;
type StripeWebhook = Jsonify<R<typeof handleStripeEvent>>;
type AdminStudios = Jsonify<{ studios: R<typeof adminStudioList> }>;
type AdminStudio = Jsonify<R<typeof adminStudioDetail>>;
type Quotas = Jsonify<{ quotas: R<typeof studioQuotaView> }>;
type QuotasPatch = Jsonify<{ quotas: R<typeof updateQuotas> }>;
type Adjustments = Jsonify<{ adjustments: R<typeof listAdjustments> }>;
type AdjustmentPost = Jsonify<{ adjustment: R<typeof adjustCredit>["adjustment"]; balanceMs: R<typeof adjustCredit>["balanceMs"] }>;
type Refund = Jsonify<R<typeof adminRefund>>;
type Status = Jsonify<{ studio: { id: string; status: R<typeof setStudioStatus> } }>;
type Users = Jsonify<{ users: R<typeof allUsers> }>;
type UserPatch = Jsonify<{ user: R<typeof setPlatformRole> }>;
type Audit = Jsonify<{ entries: R<typeof listAudit> }>;
type Finance = Jsonify<R<typeof platformFinance>>;
type Queue = Jsonify<{ sweeps: R<typeof adminQueue> }>;

export interface ResponseTies {
  signup: [Accepts<Out<typeof A.signupAnswer>, Signup>, Gives<Signup, Out<typeof A.signupAnswer>>];
  passwordReset: [Accepts<Out<typeof A.passwordResetAnswer>, PasswordReset>, Gives<PasswordReset, Out<typeof A.passwordResetAnswer>>];
  meSessions: [Accepts<Out<typeof A.meSessionsAnswer>, MeSessions>, Gives<MeSessions, Out<typeof A.meSessionsAnswer>>];
  token: [Accepts<Out<typeof A.tokenAnswer>, Token>, Gives<Token, Out<typeof A.tokenAnswer>>];
  invite: [Accepts<Out<typeof A.inviteAnswer>, Invite>, Gives<Invite, Out<typeof A.inviteAnswer>>];
  inviteAccept: [Accepts<Out<typeof A.inviteAcceptAnswer>, InviteAccept>, Gives<InviteAccept, Out<typeof A.inviteAcceptAnswer>>];
  devMail: [Accepts<Out<typeof A.devMailAnswer>, DevMail>, Gives<DevMail, Out<typeof A.devMailAnswer>>];
  memberPatch: [Accepts<Out<typeof A.memberPatchAnswer>, MemberPatch>, Gives<MemberPatch, Out<typeof A.memberPatchAnswer>>];
  memberDelete: [Accepts<Out<typeof A.memberDeleteAnswer>, MemberDelete>, Gives<MemberDelete, Out<typeof A.memberDeleteAnswer>>];
  invites: [Accepts<Out<typeof A.invitesAnswer>, Invites>, Gives<Invites, Out<typeof A.invitesAnswer>>];
  invitePost: [Accepts<Out<typeof A.invitePostAnswer>, InvitePost>, Gives<InvitePost, Out<typeof A.invitePostAnswer>>];
  inviteDelete: [Accepts<Out<typeof A.inviteDeleteAnswer>, InviteDelete>, Gives<InviteDelete, Out<typeof A.inviteDeleteAnswer>>];
  overview: [Accepts<Out<typeof A.overviewAnswer>, Overview>, Gives<Overview, Out<typeof A.overviewAnswer>>];
  webhooks: [Accepts<Out<typeof A.webhooksAnswer>, Webhooks>, Gives<Webhooks, Out<typeof A.webhooksAnswer>>];
  webhookPost: [Accepts<Out<typeof A.webhookPostAnswer>, WebhookPost>, Gives<WebhookPost, Out<typeof A.webhookPostAnswer>>];
  webhookDelete: [Accepts<Out<typeof A.webhookDeleteAnswer>, WebhookDelete>, Gives<WebhookDelete, Out<typeof A.webhookDeleteAnswer>>];
  deliveries: [Accepts<Out<typeof A.deliveriesAnswer>, Deliveries>, Gives<Deliveries, Out<typeof A.deliveriesAnswer>>];
  resend: [Accepts<Out<typeof A.resendAnswer>, Resend>, Gives<Resend, Out<typeof A.resendAnswer>>];
  tokenDelete: [Accepts<Out<typeof A.tokenDeleteAnswer>, TokenDelete>, Gives<TokenDelete, Out<typeof A.tokenDeleteAnswer>>];
  quote: [Accepts<Out<typeof A.quoteAnswer>, Quote>, Gives<Quote, Out<typeof A.quoteAnswer>>];
  sweeps: [Accepts<Out<typeof A.sweepsAnswer>, Sweeps>, Gives<Sweeps, Out<typeof A.sweepsAnswer>>];
  sweep: [Accepts<Out<typeof A.sweepAnswer>, Sweep>, Gives<Sweep, Out<typeof A.sweepAnswer>>];
  envelope: [Accepts<Out<typeof A.envelopeAnswer>, Envelope>, Gives<Envelope, Out<typeof A.envelopeAnswer>>];
  catalogues: [Accepts<Out<typeof A.cataloguesAnswer>, Catalogues>, Gives<Catalogues, Out<typeof A.cataloguesAnswer>>];
  cataloguePost: [Accepts<Out<typeof A.cataloguePostAnswer>, CataloguePost>, Gives<CataloguePost, Out<typeof A.cataloguePostAnswer>>];
  catalogue: [Accepts<Out<typeof A.catalogueAnswer>, Catalogue>, Gives<Catalogue, Out<typeof A.catalogueAnswer>>];
  checkQuote: [Accepts<Out<typeof A.checkQuoteAnswer>, CheckQuote>, Gives<CheckQuote, Out<typeof A.checkQuoteAnswer>>];
  checks: [Accepts<Out<typeof A.checksAnswer>, Checks>, Gives<Checks, Out<typeof A.checksAnswer>>];
  check: [Accepts<Out<typeof A.checkAnswer>, Check>, Gives<Check, Out<typeof A.checkAnswer>>];
  snapshots: [Accepts<Out<typeof A.snapshotsAnswer>, Snapshots>, Gives<Snapshots, Out<typeof A.snapshotsAnswer>>];
  snapshotPost: [Accepts<Out<typeof A.snapshotPostAnswer>, SnapshotPost>, Gives<SnapshotPost, Out<typeof A.snapshotPostAnswer>>];
  snapshot: [Accepts<Out<typeof A.snapshotAnswer>, Snapshot>, Gives<Snapshot, Out<typeof A.snapshotAnswer>>];
  billing: [Accepts<Out<typeof B.billingAnswer>, Billing>, Gives<Billing, Out<typeof B.billingAnswer>>];
  checkout: [Accepts<Out<typeof B.checkoutAnswer>, Checkout>, Gives<Checkout, Out<typeof B.checkoutAnswer>>];
  checkoutCheck: [Accepts<Out<typeof B.checkoutCheckAnswer>, CheckoutCheck>, Gives<CheckoutCheck, Out<typeof B.checkoutCheckAnswer>>];
  ledger: [Accepts<Out<typeof B.ledgerAnswer>, Ledger>, Gives<Ledger, Out<typeof B.ledgerAnswer>>];
  usage: [Accepts<Out<typeof B.usageAnswer>, Usage>, Gives<Usage, Out<typeof B.usageAnswer>>];
  invoices: [Accepts<Out<typeof B.invoicesAnswer>, Invoices>, Gives<Invoices, Out<typeof B.invoicesAnswer>>];
  invoice: [Accepts<Out<typeof B.invoiceAnswer>, Invoice>, Gives<Invoice, Out<typeof B.invoiceAnswer>>];
  stripeWebhook: [Accepts<Out<typeof B.stripeWebhookAnswer>, StripeWebhook>, Gives<StripeWebhook, Out<typeof B.stripeWebhookAnswer>>];
  adminStudios: [Accepts<Out<typeof A.adminStudiosAnswer>, AdminStudios>, Gives<AdminStudios, Out<typeof A.adminStudiosAnswer>>];
  adminStudio: [Accepts<Out<typeof A.adminStudioAnswer>, AdminStudio>, Gives<AdminStudio, Out<typeof A.adminStudioAnswer>>];
  quotas: [Accepts<Out<typeof A.quotasAnswer>, Quotas>, Gives<Quotas, Out<typeof A.quotasAnswer>>];
  quotasPatch: [Accepts<Out<typeof A.quotasPatchAnswer>, QuotasPatch>, Gives<QuotasPatch, Out<typeof A.quotasPatchAnswer>>];
  adjustments: [Accepts<Out<typeof A.adjustmentsAnswer>, Adjustments>, Gives<Adjustments, Out<typeof A.adjustmentsAnswer>>];
  adjustmentPost: [Accepts<Out<typeof A.adjustmentPostAnswer>, AdjustmentPost>, Gives<AdjustmentPost, Out<typeof A.adjustmentPostAnswer>>];
  refund: [Accepts<Out<typeof B.refundAnswer>, Refund>, Gives<Refund, Out<typeof B.refundAnswer>>];
  status: [Accepts<Out<typeof A.statusAnswer>, Status>, Gives<Status, Out<typeof A.statusAnswer>>];
  users: [Accepts<Out<typeof A.usersAnswer>, Users>, Gives<Users, Out<typeof A.usersAnswer>>];
  userPatch: [Accepts<Out<typeof A.userPatchAnswer>, UserPatch>, Gives<UserPatch, Out<typeof A.userPatchAnswer>>];
  audit: [Accepts<Out<typeof A.auditAnswer>, Audit>, Gives<Audit, Out<typeof A.auditAnswer>>];
  finance: [Accepts<Out<typeof B.financeAnswer>, Finance>, Gives<Finance, Out<typeof B.financeAnswer>>];
  queue: [Accepts<Out<typeof A.queueAnswer>, Queue>, Gives<Queue, Out<typeof A.queueAnswer>>];
}
