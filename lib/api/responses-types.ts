/**
 * Compile-time ties between each success-body schema (./responses.ts, ./responses-billing.ts) and the
 * type of what the route answers, built from the lib/ functions the route calls: `npx tsc` fails when
 * either side gains, loses or retypes a field without the other. JSON form: a Date becomes its ISO
 * string, a field that may be undefined becomes optional. Types only; nothing here runs.
 */
import "server-only";
import type { output, ZodType } from "zod";
import type { listAudit } from "@/lib/audit/audit";
import type { invoiceDetail, listInvoices, ledgerPage, billingSummary, usageBreakdown } from "@/lib/billing/queries";
import type { financeView, retryMeterEvent } from "@/lib/billing/finance-ops";
import type { billingDetails } from "@/lib/billing/details";
import type { setOverageOn } from "@/lib/billing/overage-switch";
import type { ledgerGroupsPage, sweepLedgerChunks } from "@/lib/ledger/statement";
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
import type { snapshotDetail, snapshotSweepStart, listSnapshots } from "@/lib/snapshots/store";
import type { SNAPSHOT_LIMITS } from "@/lib/snapshots/format";
import type { sweepView } from "@/lib/queue/views";
import type { sweepCreators } from "@/lib/queue/api";
import type { envelopeDocument } from "@/lib/sweeps/envelope";
import type { withContactTuning } from "@/lib/sweeps/contact-tuning";
import type { revokeApiToken, tokenView } from "@/lib/auth/api-tokens";
import type { resendDelivery, listDeliveries, listEndpoints, createEndpoint } from "@/lib/webhooks/webhooks";
import type { simulate } from "@/lib/physics";
import type { CellResult } from "@/lib/sweeps/results";
import type { cellAt } from "@/lib/sweeps/grid";
import type { gameSettings } from "@/lib/catalogues/contact-tuning";
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
/** Compiles only when every answer the lib can give is accepted by the schema (no field missing or retyped) … */
type LibFitsSchema<Lib extends Schema, Schema> = Lib;
/** … and every value the schema allows is one the lib's type allows (the schema lacks no field the lib always sends). */
type SchemaFitsLib<Schema extends Lib, Lib> = Schema;
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
type Snapshot = Jsonify<{ snapshot: R<typeof snapshotDetail> } & ReturnType<typeof snapshotSweepStart>>;
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
type Finance = Jsonify<R<typeof financeView>>;
type MeterRetry = Jsonify<R<typeof retryMeterEvent>>;
type BillingDetailsView = Jsonify<R<typeof billingDetails>>;
type OverageSwitchView = Jsonify<R<typeof setOverageOn>>;
type LedgerGroups = Jsonify<R<typeof ledgerGroupsPage>>;
type SweepLedger = Jsonify<R<typeof sweepLedgerChunks>>;
type Queue = Jsonify<{ sweeps: R<typeof adminQueue> }>;

/** One cell as the route builds it (stored result or null while not computed, plus the series run again). */
type Cell = Jsonify<{
  cell: { index: number; axisValues: ReturnType<typeof cellAt>["axisValues"]; scenario: ReturnType<typeof cellAt>["scenario"]; metrics: CellResult["metrics"] | null; verdict: CellResult["verdict"] | null; reason: CellResult["reason"] | null };
  series: ReturnType<typeof simulate>["series"];
}>;
type GameSettingsDoc = Jsonify<ReturnType<typeof gameSettings>>;

export interface ResponseTies {
  signup: [LibFitsSchema<Signup, Out<typeof A.signupAnswer>>, SchemaFitsLib<Out<typeof A.signupAnswer>, Signup>];
  passwordReset: [LibFitsSchema<PasswordReset, Out<typeof A.passwordResetAnswer>>, SchemaFitsLib<Out<typeof A.passwordResetAnswer>, PasswordReset>];
  meSessions: [LibFitsSchema<MeSessions, Out<typeof A.meSessionsAnswer>>, SchemaFitsLib<Out<typeof A.meSessionsAnswer>, MeSessions>];
  token: [LibFitsSchema<Token, Out<typeof A.tokenAnswer>>, SchemaFitsLib<Out<typeof A.tokenAnswer>, Token>];
  invite: [LibFitsSchema<Invite, Out<typeof A.inviteAnswer>>, SchemaFitsLib<Out<typeof A.inviteAnswer>, Invite>];
  inviteAccept: [LibFitsSchema<InviteAccept, Out<typeof A.inviteAcceptAnswer>>, SchemaFitsLib<Out<typeof A.inviteAcceptAnswer>, InviteAccept>];
  devMail: [LibFitsSchema<DevMail, Out<typeof A.devMailAnswer>>, SchemaFitsLib<Out<typeof A.devMailAnswer>, DevMail>];
  memberPatch: [LibFitsSchema<MemberPatch, Out<typeof A.memberPatchAnswer>>, SchemaFitsLib<Out<typeof A.memberPatchAnswer>, MemberPatch>];
  memberDelete: [LibFitsSchema<MemberDelete, Out<typeof A.memberDeleteAnswer>>, SchemaFitsLib<Out<typeof A.memberDeleteAnswer>, MemberDelete>];
  invites: [LibFitsSchema<Invites, Out<typeof A.invitesAnswer>>, SchemaFitsLib<Out<typeof A.invitesAnswer>, Invites>];
  invitePost: [LibFitsSchema<InvitePost, Out<typeof A.invitePostAnswer>>, SchemaFitsLib<Out<typeof A.invitePostAnswer>, InvitePost>];
  inviteDelete: [LibFitsSchema<InviteDelete, Out<typeof A.inviteDeleteAnswer>>, SchemaFitsLib<Out<typeof A.inviteDeleteAnswer>, InviteDelete>];
  overview: [LibFitsSchema<Overview, Out<typeof A.overviewAnswer>>, SchemaFitsLib<Out<typeof A.overviewAnswer>, Overview>];
  webhooks: [LibFitsSchema<Webhooks, Out<typeof A.webhooksAnswer>>, SchemaFitsLib<Out<typeof A.webhooksAnswer>, Webhooks>];
  webhookPost: [LibFitsSchema<WebhookPost, Out<typeof A.webhookPostAnswer>>, SchemaFitsLib<Out<typeof A.webhookPostAnswer>, WebhookPost>];
  webhookDelete: [LibFitsSchema<WebhookDelete, Out<typeof A.webhookDeleteAnswer>>, SchemaFitsLib<Out<typeof A.webhookDeleteAnswer>, WebhookDelete>];
  deliveries: [LibFitsSchema<Deliveries, Out<typeof A.deliveriesAnswer>>, SchemaFitsLib<Out<typeof A.deliveriesAnswer>, Deliveries>];
  resend: [LibFitsSchema<Resend, Out<typeof A.resendAnswer>>, SchemaFitsLib<Out<typeof A.resendAnswer>, Resend>];
  tokenDelete: [LibFitsSchema<TokenDelete, Out<typeof A.tokenDeleteAnswer>>, SchemaFitsLib<Out<typeof A.tokenDeleteAnswer>, TokenDelete>];
  quote: [LibFitsSchema<Quote, Out<typeof A.quoteAnswer>>, SchemaFitsLib<Out<typeof A.quoteAnswer>, Quote>];
  sweeps: [LibFitsSchema<Sweeps, Out<typeof A.sweepsAnswer>>, SchemaFitsLib<Out<typeof A.sweepsAnswer>, Sweeps>];
  sweep: [LibFitsSchema<Sweep, Out<typeof A.sweepAnswer>>, SchemaFitsLib<Out<typeof A.sweepAnswer>, Sweep>];
  envelope: [LibFitsSchema<Envelope, Out<typeof A.envelopeAnswer>>, SchemaFitsLib<Out<typeof A.envelopeAnswer>, Envelope>];
  catalogues: [LibFitsSchema<Catalogues, Out<typeof A.cataloguesAnswer>>, SchemaFitsLib<Out<typeof A.cataloguesAnswer>, Catalogues>];
  cataloguePost: [LibFitsSchema<CataloguePost, Out<typeof A.cataloguePostAnswer>>, SchemaFitsLib<Out<typeof A.cataloguePostAnswer>, CataloguePost>];
  catalogue: [LibFitsSchema<Catalogue, Out<typeof A.catalogueAnswer>>, SchemaFitsLib<Out<typeof A.catalogueAnswer>, Catalogue>];
  checkQuote: [LibFitsSchema<CheckQuote, Out<typeof A.checkQuoteAnswer>>, SchemaFitsLib<Out<typeof A.checkQuoteAnswer>, CheckQuote>];
  checks: [LibFitsSchema<Checks, Out<typeof A.checksAnswer>>, SchemaFitsLib<Out<typeof A.checksAnswer>, Checks>];
  check: [LibFitsSchema<Check, Out<typeof A.checkAnswer>>, SchemaFitsLib<Out<typeof A.checkAnswer>, Check>];
  snapshots: [LibFitsSchema<Snapshots, Out<typeof A.snapshotsAnswer>>, SchemaFitsLib<Out<typeof A.snapshotsAnswer>, Snapshots>];
  snapshotPost: [LibFitsSchema<SnapshotPost, Out<typeof A.snapshotPostAnswer>>, SchemaFitsLib<Out<typeof A.snapshotPostAnswer>, SnapshotPost>];
  snapshot: [LibFitsSchema<Snapshot, Out<typeof A.snapshotAnswer>>, SchemaFitsLib<Out<typeof A.snapshotAnswer>, Snapshot>];
  billing: [LibFitsSchema<Billing, Out<typeof B.billingAnswer>>, SchemaFitsLib<Out<typeof B.billingAnswer>, Billing>];
  checkout: [LibFitsSchema<Checkout, Out<typeof B.checkoutAnswer>>, SchemaFitsLib<Out<typeof B.checkoutAnswer>, Checkout>];
  checkoutCheck: [LibFitsSchema<CheckoutCheck, Out<typeof B.checkoutCheckAnswer>>, SchemaFitsLib<Out<typeof B.checkoutCheckAnswer>, CheckoutCheck>];
  ledger: [LibFitsSchema<Ledger, Out<typeof B.ledgerAnswer>>, SchemaFitsLib<Out<typeof B.ledgerAnswer>, Ledger>];
  usage: [LibFitsSchema<Usage, Out<typeof B.usageAnswer>>, SchemaFitsLib<Out<typeof B.usageAnswer>, Usage>];
  invoices: [LibFitsSchema<Invoices, Out<typeof B.invoicesAnswer>>, SchemaFitsLib<Out<typeof B.invoicesAnswer>, Invoices>];
  invoice: [LibFitsSchema<Invoice, Out<typeof B.invoiceAnswer>>, SchemaFitsLib<Out<typeof B.invoiceAnswer>, Invoice>];
  stripeWebhook: [LibFitsSchema<StripeWebhook, Out<typeof B.stripeWebhookAnswer>>, SchemaFitsLib<Out<typeof B.stripeWebhookAnswer>, StripeWebhook>];
  adminStudios: [LibFitsSchema<AdminStudios, Out<typeof A.adminStudiosAnswer>>, SchemaFitsLib<Out<typeof A.adminStudiosAnswer>, AdminStudios>];
  adminStudio: [LibFitsSchema<AdminStudio, Out<typeof A.adminStudioAnswer>>, SchemaFitsLib<Out<typeof A.adminStudioAnswer>, AdminStudio>];
  quotas: [LibFitsSchema<Quotas, Out<typeof A.quotasAnswer>>, SchemaFitsLib<Out<typeof A.quotasAnswer>, Quotas>];
  quotasPatch: [LibFitsSchema<QuotasPatch, Out<typeof A.quotasPatchAnswer>>, SchemaFitsLib<Out<typeof A.quotasPatchAnswer>, QuotasPatch>];
  adjustments: [LibFitsSchema<Adjustments, Out<typeof A.adjustmentsAnswer>>, SchemaFitsLib<Out<typeof A.adjustmentsAnswer>, Adjustments>];
  adjustmentPost: [LibFitsSchema<AdjustmentPost, Out<typeof A.adjustmentPostAnswer>>, SchemaFitsLib<Out<typeof A.adjustmentPostAnswer>, AdjustmentPost>];
  refund: [LibFitsSchema<Refund, Out<typeof B.refundAnswer>>, SchemaFitsLib<Out<typeof B.refundAnswer>, Refund>];
  status: [LibFitsSchema<Status, Out<typeof A.statusAnswer>>, SchemaFitsLib<Out<typeof A.statusAnswer>, Status>];
  users: [LibFitsSchema<Users, Out<typeof A.usersAnswer>>, SchemaFitsLib<Out<typeof A.usersAnswer>, Users>];
  userPatch: [LibFitsSchema<UserPatch, Out<typeof A.userPatchAnswer>>, SchemaFitsLib<Out<typeof A.userPatchAnswer>, UserPatch>];
  audit: [LibFitsSchema<Audit, Out<typeof A.auditAnswer>>, SchemaFitsLib<Out<typeof A.auditAnswer>, Audit>];
  finance: [LibFitsSchema<Finance, Out<typeof B.financeAnswer>>, SchemaFitsLib<Out<typeof B.financeAnswer>, Finance>];
  ledgerGroups: [LibFitsSchema<LedgerGroups, Out<typeof B.ledgerGroupsAnswer>>, SchemaFitsLib<Out<typeof B.ledgerGroupsAnswer>, LedgerGroups>];
  sweepLedger: [LibFitsSchema<SweepLedger, Out<typeof B.sweepLedgerAnswer>>, SchemaFitsLib<Out<typeof B.sweepLedgerAnswer>, SweepLedger>];
  billingDetails: [LibFitsSchema<BillingDetailsView, Out<typeof B.billingDetailsAnswer>>, SchemaFitsLib<Out<typeof B.billingDetailsAnswer>, BillingDetailsView>];
  overageSwitch: [LibFitsSchema<OverageSwitchView, Out<typeof B.overageSwitchAnswer>>, SchemaFitsLib<Out<typeof B.overageSwitchAnswer>, OverageSwitchView>];
  meterRetry: [LibFitsSchema<MeterRetry, Out<typeof B.meterRetryAnswer>>, SchemaFitsLib<Out<typeof B.meterRetryAnswer>, MeterRetry>];
  queue: [LibFitsSchema<Queue, Out<typeof A.queueAnswer>>, SchemaFitsLib<Out<typeof A.queueAnswer>, Queue>];
  // One way only: every metric is a number in the lib's type, but a non-finite one is sent as null
  // (lib/queue/views.ts apiMetrics), so the schema accepts more than the type says.
  cell: LibFitsSchema<Cell, Out<typeof A.cellAnswer>>;
  // format=game-settings of the check export: one branch of its union.
  gameSettings: LibFitsSchema<GameSettingsDoc, Out<typeof A.checkExportAnswer>>;
}
