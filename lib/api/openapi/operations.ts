/**
 * The registry of the public API: one entry per route method under app/api/v1, with the same zod
 * schemas and access policies the route handlers use. lib/api/openapi/document.ts turns it into the
 * OpenAPI 3.1 document served at /api/v1/openapi.json; tests/integration/openapi.test.ts fails when a
 * route exists that is not listed here, or when an entry's policy differs from the route's.
 *
 * Adding a route: add one entry below (path as in the URL, {param} for [param]), with its body/query
 * schema exported from lib/ (route files may export only what Next allows), its success status and
 * its policy.
 */
import "server-only";
import { z } from "@/lib/zod";
import {
  adjustmentPostAnswer,
  adjustmentsAnswer,
  adminStudioAnswer,
  adminStudiosAnswer,
  auditAnswer,
  catalogueAnswer,
  cataloguePostAnswer,
  cataloguesAnswer,
  cellAnswer,
  cellsAnswer,
  checkAnswer,
  checkExportAnswer,
  checkQuoteAnswer,
  checksAnswer,
  deliveriesAnswer,
  devMailAnswer,
  envelopeAnswer,
  inviteAcceptAnswer,
  inviteAnswer,
  inviteDeleteAnswer,
  invitePostAnswer,
  invitesAnswer,
  meSessionsAnswer,
  memberDeleteAnswer,
  memberPatchAnswer,
  openApiDocumentAnswer,
  overviewAnswer,
  passwordResetAnswer,
  queueAnswer,
  quotasAnswer,
  quotasPatchAnswer,
  quoteAnswer,
  resendAnswer,
  signupAnswer,
  snapshotAnswer,
  snapshotPostAnswer,
  snapshotsAnswer,
  statusAnswer,
  sweepAnswer,
  sweepsAnswer,
  tokenAnswer,
  tokenDeleteAnswer,
  userPatchAnswer,
  usersAnswer,
  webhookDeleteAnswer,
  webhookPostAnswer,
  webhooksAnswer,
} from "@/lib/api/responses";
// Billing success bodies: one file, so fields added to billing routes get their schema in one place.
import {
  billingAnswer,
  checkoutAnswer,
  checkoutCheckAnswer,
  financeAnswer,
  meterRetryAnswer,
  billingDetailsAnswer,
  overageSwitchAnswer,
  ledgerGroupsAnswer,
  sweepLedgerAnswer,
  ledgerExportAnswer,
  invoiceAnswer,
  invoicesAnswer,
  ledgerAnswer,
  refundAnswer,
  stripeWebhookAnswer,
  usageAnswer,
} from "@/lib/api/responses-billing";
import { auditQuerySchema } from "@/lib/audit/audit";
import { apiTokenViewSchema, createTokenSchema } from "@/lib/auth/api-tokens";
import { passwordResetConfirmSchema, passwordResetRequestSchema, publicUserSchema, signUpSchema } from "@/lib/auth/accounts";
import { type RoutePolicy } from "@/lib/auth/guard";
import { BILLING_PEOPLE, BILLING_READERS, ENGINEERS_WRITE, MEMBERS_READ, OWNERS_ONLY, PLATFORM_ADMIN, PUBLIC, SIGNED_IN } from "@/lib/auth/policies";
import { checkoutSchema } from "@/lib/billing/checkout";
import { meterRetrySchema } from "@/lib/billing/finance-ops";
import { adminRefundSchema } from "@/lib/billing/refunds";
import { invoicesQuerySchema, ledgerQuerySchema, usageQuerySchema } from "@/lib/billing/queries";
import { billingDetailsSchema } from "@/lib/billing/details";
import { overageSwitchSchema } from "@/lib/billing/overage-switch";
import { financeQuerySchema } from "@/lib/billing/reconciliation-export";
import { ledgerExportQuerySchema, ledgerGroupsQuerySchema } from "@/lib/ledger/statement";
import { checkQuoteRequestSchema, submitCheckRequestSchema } from "@/lib/catalogues/api";
import { checkSettingsSchema } from "@/lib/catalogues/check";
import { quoteRequestSchema, rerunQuoteRequestSchema, rerunRequestSchema, submitSweepRequestSchema } from "@/lib/queue/api";
import { adjustmentSchema, platformRoleSchema, quotaPatchSchema, statusChangeSchema } from "@/lib/quotas/admin";
import { changeRoleSchema, memberViewSchema, roleSchema } from "@/lib/studios/members";
import { createInviteSchema } from "@/lib/studios/invites";
import { createEndpointSchema } from "@/lib/webhooks/webhooks";
import { createStudioSchema, studioOfUserSchema, studioViewSchema } from "@/lib/studios/studios";
import { sweepSpecSchema } from "@/lib/sweeps/spec";
import { SWEEP_STATUSES } from "@/lib/sweeps/status";

export type Method = "get" | "post" | "put" | "patch" | "delete";

/** What a successful answer carries. */
export type Produces = "json" | "json-or-csv" | "csv" | "file";

export interface Operation {
  method: Method;
  /** The URL path, {param} for each dynamic segment. */
  path: string;
  summary: string;
  tag: string;
  policy: RoutePolicy;
  /** The success status. */
  ok: number;
  /** Other success statuses with the same body (e.g. 200 when a retry found nothing to do). */
  alsoOk?: readonly number[];
  produces?: Produces;
  /** JSON request body (the route's own schema). */
  body?: z.ZodType;
  /** multipart/form-data upload (a file field and an optional name). */
  upload?: "catalogue" | "snapshot";
  /** Query parameters (an object schema; the route's own where it has one). */
  query?: z.ZodObject;
  /** The body must be signed by Stripe (the webhook); not for clients. */
  internal?: boolean;
  /**
   * The success body, field by field, from the schemas lib/ builds the answer with (the view types are
   * inferred from them). Operations without one are described as a JSON object only.
   */
  response?: z.ZodType;
}


/** The sweep list's query (parsed by hand in lib/queue/api.ts: parseListQuery, with these limits). */
const sweepListQuery = z.object({
  status: z.enum(SWEEP_STATUSES).optional(),
  page: z.int().min(1).max(1_000_000).optional(),
  pageSize: z.int().min(1).max(100).optional(),
});
const cellsQuery = z.object({
  format: z.enum(["json", "csv"]).optional(),
  after: z.string().regex(/^(0|[1-9][0-9]{0,18})$/).optional().describe("change cursor from an earlier answer (x-kickdrift-cursor)"),
});
const envelopeQuery = z.object({
  format: z.enum(["json", "csv"]).optional(),
  bound: z.enum(["max", "min"]).optional(),
  at: z.string().max(200).optional(),
});
const checkExportQuery = z.object({ format: z.enum(["json", "csv", "game-settings"]).optional(), table: z.enum(["pairs", "recommendation", "contacts", "friction"]).optional(), stiffness: z.enum(["checked", "recommended"]).optional() });
const snapshotListQuery = z.object({ name: z.string().max(200).optional() });

/** The sweep spec as the quote and submit routes read it (the spec field is checked by sweepSpecSchema). */
const quoteBody = quoteRequestSchema.extend({ spec: sweepSpecSchema.optional() });
const submitBody = submitSweepRequestSchema.extend({ spec: sweepSpecSchema.optional() });
const checkQuoteBody = checkQuoteRequestSchema.extend({ settings: checkSettingsSchema.optional() });
const checkSubmitBody = submitCheckRequestSchema.extend({ settings: checkSettingsSchema.optional() });

const S = "/api/v1/studios/{studioId}";

/** Success bodies (the routes build them from these lib/ schemas' types). */
const meAnswer = z.strictObject({ user: publicUserSchema, studios: z.array(studioOfUserSchema) });
const studiosAnswer = z.strictObject({ studios: z.array(studioOfUserSchema) });
const createdStudioAnswer = z.strictObject({ studio: studioOfUserSchema });
const studioAnswer = z.strictObject({ studio: studioViewSchema, role: roleSchema.nullable().describe("The caller's role; null for an API token.") });
/** GET of one studio: also why and since when it is suspended (null while active), for the members' banner. */
const studioWithSuspensionAnswer = studioAnswer.extend({
  suspension: z.strictObject({ reason: z.string(), since: z.iso.datetime() }).nullable().describe("The admin's reason and the time of the suspension; null while the studio is active."),
});
const membersAnswer = z.strictObject({ members: z.array(memberViewSchema) });
const tokensAnswer = z.strictObject({ tokens: z.array(apiTokenViewSchema) });
const createdTokenAnswer = z.strictObject({
  token: apiTokenViewSchema.pick({ id: true, name: true, scopes: true, prefix: true, createdAt: true }),
  secret: z.string().describe("The token itself, shown this once."),
});

export const OPERATIONS: readonly Operation[] = [
  // Accounts
  { method: "post", path: "/api/v1/signup", summary: "Create an account (the same answer whether or not the address has one)", tag: "Accounts", policy: PUBLIC, ok: 202, body: signUpSchema, response: signupAnswer },
  { method: "post", path: "/api/v1/password-reset", summary: "E-mail a password-reset link", tag: "Accounts", policy: PUBLIC, ok: 202, body: passwordResetRequestSchema, response: passwordResetAnswer },
  { method: "post", path: "/api/v1/password-reset/confirm", summary: "Set a new password with a reset token", tag: "Accounts", policy: PUBLIC, ok: 200, body: passwordResetConfirmSchema, response: passwordResetAnswer },
  { method: "get", path: "/api/v1/me", summary: "The signed-in user and their studios", tag: "Accounts", policy: SIGNED_IN, ok: 200, response: meAnswer },
  { method: "delete", path: "/api/v1/me/sessions", summary: "Sign out everywhere (ends every session of the user)", tag: "Accounts", policy: SIGNED_IN, ok: 200, response: meSessionsAnswer },
  { method: "get", path: "/api/v1/token", summary: "The calling API token: its studio and scopes", tag: "Accounts", policy: PUBLIC, ok: 200, response: tokenAnswer },
  { method: "get", path: "/api/v1/invites/{token}", summary: "An invitation, by its secret", tag: "Accounts", policy: PUBLIC, ok: 200, response: inviteAnswer },
  { method: "post", path: "/api/v1/invites/{token}/accept", summary: "Accept an invitation", tag: "Accounts", policy: SIGNED_IN, ok: 200, response: inviteAcceptAnswer },
  { method: "get", path: "/api/v1/dev/mail", summary: "Captured mail of the demo's local mail fake (platform admins; demo, development and tests only)", tag: "Admin", policy: PLATFORM_ADMIN, ok: 200, response: devMailAnswer },
  // Studios
  { method: "get", path: "/api/v1/studios", summary: "The caller's studios", tag: "Studios", policy: SIGNED_IN, ok: 200, response: studiosAnswer },
  { method: "post", path: "/api/v1/studios", summary: "Create a studio (the caller becomes its owner)", tag: "Studios", policy: SIGNED_IN, ok: 201, body: createStudioSchema, response: createdStudioAnswer },
  { method: "get", path: S, summary: "A studio", tag: "Studios", policy: MEMBERS_READ, ok: 200, response: studioWithSuspensionAnswer },
  { method: "get", path: `${S}/members`, summary: "Members of a studio", tag: "Studios", policy: MEMBERS_READ, ok: 200, response: membersAnswer },
  { method: "patch", path: `${S}/members/{userId}`, summary: "Change a member's role", tag: "Studios", policy: OWNERS_ONLY, ok: 200, body: changeRoleSchema, response: memberPatchAnswer },
  { method: "delete", path: `${S}/members/{userId}`, summary: "Remove a member", tag: "Studios", policy: OWNERS_ONLY, ok: 200, response: memberDeleteAnswer },
  { method: "get", path: `${S}/invites`, summary: "Pending invitations", tag: "Studios", policy: OWNERS_ONLY, ok: 200, response: invitesAnswer },
  { method: "post", path: `${S}/invites`, summary: "Invite someone by e-mail", tag: "Studios", policy: OWNERS_ONLY, ok: 201, body: createInviteSchema, response: invitePostAnswer },
  { method: "delete", path: `${S}/invites/{inviteId}`, summary: "Withdraw an invitation", tag: "Studios", policy: OWNERS_ONLY, ok: 200, response: inviteDeleteAnswer },
  { method: "get", path: `${S}/tokens`, summary: "API tokens of a studio", tag: "Studios", policy: OWNERS_ONLY, ok: 200, response: tokensAnswer },
  { method: "get", path: `${S}/overview`, summary: "The studio home: compute, running and latest sweeps, checks, next invoice", tag: "Studios", policy: MEMBERS_READ, ok: 200, response: overviewAnswer },
  { method: "get", path: `${S}/webhooks`, summary: "Webhook endpoints of a studio", tag: "Webhooks", policy: OWNERS_ONLY, ok: 200, response: webhooksAnswer },
  { method: "post", path: `${S}/webhooks`, summary: "Register a webhook endpoint (its signing secret is shown once)", tag: "Webhooks", policy: OWNERS_ONLY, ok: 201, body: createEndpointSchema, response: webhookPostAnswer },
  { method: "delete", path: `${S}/webhooks/{endpointId}`, summary: "Remove a webhook endpoint", tag: "Webhooks", policy: OWNERS_ONLY, ok: 200, response: webhookDeleteAnswer },
  { method: "get", path: `${S}/webhooks/{endpointId}/deliveries`, summary: "The delivery log of an endpoint", tag: "Webhooks", policy: OWNERS_ONLY, ok: 200, response: deliveriesAnswer },
  { method: "post", path: `${S}/webhooks/{endpointId}/deliveries/{eventId}/resend`, summary: "Send an event to an endpoint again", tag: "Webhooks", policy: OWNERS_ONLY, ok: 202, response: resendAnswer },
  { method: "post", path: `${S}/tokens`, summary: "Create an API token (its secret is shown once)", tag: "Studios", policy: OWNERS_ONLY, ok: 201, body: createTokenSchema, response: createdTokenAnswer },
  { method: "delete", path: `${S}/tokens/{tokenId}`, summary: "Revoke an API token", tag: "Studios", policy: OWNERS_ONLY, ok: 200, response: tokenDeleteAnswer },
  // Sweeps
  { method: "post", path: `${S}/quotes`, summary: "Quote a sweep spec", tag: "Sweeps", policy: ENGINEERS_WRITE, ok: 200, body: quoteBody, response: quoteAnswer },
  { method: "get", path: `${S}/sweeps`, summary: "Sweeps of a studio", tag: "Sweeps", policy: MEMBERS_READ, ok: 200, query: sweepListQuery, response: sweepsAnswer },
  { method: "post", path: `${S}/sweeps`, summary: "Submit a sweep", tag: "Sweeps", policy: ENGINEERS_WRITE, ok: 201, body: submitBody, response: sweepAnswer },
  { method: "get", path: `${S}/sweeps/{sweepId}`, summary: "A sweep and its progress", tag: "Sweeps", policy: MEMBERS_READ, ok: 200, response: sweepAnswer },
  { method: "post", path: `${S}/sweeps/{sweepId}/cancel`, summary: "Cancel a sweep", tag: "Sweeps", policy: ENGINEERS_WRITE, ok: 200, response: sweepAnswer },
  { method: "get", path: `${S}/sweeps/{sweepId}/cells`, summary: "The done cells (JSON or CSV; after= for the cells changed since a cursor)", tag: "Sweeps", policy: MEMBERS_READ, ok: 200, produces: "json-or-csv", query: cellsQuery, response: cellsAnswer },
  { method: "get", path: `${S}/sweeps/{sweepId}/cells/{index}`, summary: "One cell with its time series", tag: "Sweeps", policy: MEMBERS_READ, ok: 200, response: cellAnswer },
  { method: "post", path: `${S}/sweeps/{sweepId}/cells/{index}/rerun`, summary: "Run one cell again at a smaller timestep", tag: "Sweeps", policy: ENGINEERS_WRITE, ok: 201, body: rerunRequestSchema, response: sweepAnswer },
  { method: "post", path: `${S}/sweeps/{sweepId}/cells/{index}/rerun/quote`, summary: "Quote a re-run of one cell at a smaller timestep (nothing starts)", tag: "Sweeps", policy: ENGINEERS_WRITE, ok: 200, body: rerunQuoteRequestSchema, response: quoteAnswer },
  { method: "get", path: `${S}/sweeps/{sweepId}/envelope`, summary: "The safe envelope (JSON or CSV)", tag: "Sweeps", policy: MEMBERS_READ, ok: 200, produces: "json-or-csv", query: envelopeQuery, response: envelopeAnswer },
  // Catalogues
  { method: "get", path: `${S}/catalogues`, summary: "Catalogues of a studio", tag: "Catalogues", policy: MEMBERS_READ, ok: 200, response: cataloguesAnswer },
  { method: "post", path: `${S}/catalogues`, summary: "Upload a catalogue (CSV or JSON file)", tag: "Catalogues", policy: ENGINEERS_WRITE, ok: 201, upload: "catalogue", response: cataloguePostAnswer },
  { method: "get", path: `${S}/catalogues/{catalogueId}`, summary: "A catalogue version", tag: "Catalogues", policy: MEMBERS_READ, ok: 200, response: catalogueAnswer },
  { method: "get", path: `${S}/catalogues/{catalogueId}/file`, summary: "The catalogue's original file", tag: "Catalogues", policy: MEMBERS_READ, ok: 200, produces: "file" },
  { method: "post", path: `${S}/catalogues/{catalogueId}/quote`, summary: "Quote a catalogue check", tag: "Catalogues", policy: ENGINEERS_WRITE, ok: 200, body: checkQuoteBody, response: checkQuoteAnswer },
  { method: "get", path: `${S}/catalogues/{catalogueId}/checks`, summary: "Checks of a catalogue", tag: "Catalogues", policy: MEMBERS_READ, ok: 200, response: checksAnswer },
  { method: "post", path: `${S}/catalogues/{catalogueId}/checks`, summary: "Submit a catalogue check", tag: "Catalogues", policy: ENGINEERS_WRITE, ok: 201, body: checkSubmitBody, response: checkAnswer },
  { method: "get", path: `${S}/catalogues/{catalogueId}/checks/{checkId}`, summary: "A catalogue check and its pair matrix", tag: "Catalogues", policy: MEMBERS_READ, ok: 200, response: checkAnswer },
  { method: "get", path: `${S}/catalogues/{catalogueId}/checks/{checkId}/export`, summary: "Export a check's pairs or matrix (JSON or CSV)", tag: "Catalogues", policy: MEMBERS_READ, ok: 200, produces: "json-or-csv", query: checkExportQuery, response: checkExportAnswer },
  // Snapshots
  { method: "get", path: `${S}/snapshots`, summary: "Snapshots of a studio", tag: "Snapshots", policy: MEMBERS_READ, ok: 200, query: snapshotListQuery, response: snapshotsAnswer },
  { method: "post", path: `${S}/snapshots`, summary: "Upload a scene snapshot (JSON file)", tag: "Snapshots", policy: ENGINEERS_WRITE, ok: 201, upload: "snapshot", response: snapshotPostAnswer },
  { method: "get", path: `${S}/snapshots/{snapshotId}`, summary: "A snapshot version", tag: "Snapshots", policy: MEMBERS_READ, ok: 200, response: snapshotAnswer },
  { method: "get", path: `${S}/snapshots/{snapshotId}/file`, summary: "The snapshot's original file", tag: "Snapshots", policy: MEMBERS_READ, ok: 200, produces: "file" },
  // Billing
  { method: "get", path: `${S}/billing`, summary: "Balance, packs and this month's usage", tag: "Billing", policy: BILLING_PEOPLE, ok: 200, response: billingAnswer },
  { method: "post", path: `${S}/billing/checkout`, summary: "Start buying a pack (a payment page URL)", tag: "Billing", policy: BILLING_PEOPLE, ok: 201, body: checkoutSchema, response: checkoutAnswer },
  { method: "post", path: `${S}/billing/checkout/{sessionId}`, summary: "Check a pack payment with Stripe and credit it if paid (the return page's check)", tag: "Billing", policy: BILLING_PEOPLE, ok: 200, response: checkoutCheckAnswer },
  { method: "get", path: `${S}/billing/ledger`, summary: "The ledger (JSON or CSV); read tokens may read it", tag: "Billing", policy: BILLING_READERS, ok: 200, produces: "json-or-csv", query: ledgerQuerySchema, response: ledgerAnswer },
  { method: "get", path: `${S}/billing/ledger/sweeps`, summary: "The ledger grouped by sweep (one row per sweep's usage); read tokens may read it", tag: "Billing", policy: BILLING_READERS, ok: 200, query: ledgerGroupsQuerySchema, response: ledgerGroupsAnswer },
  { method: "get", path: `${S}/billing/ledger/sweeps/{sweepId}`, summary: "One sweep's ledger entries, chunk by chunk; read tokens may read them", tag: "Billing", policy: BILLING_READERS, ok: 200, response: sweepLedgerAnswer },
  { method: "get", path: `${S}/billing/ledger/export`, summary: "The ledger as CSV or JSON, per entry or per sweep; columns name ms and minutes, cents and dollars", tag: "Billing", policy: BILLING_READERS, ok: 200, produces: "json-or-csv", query: ledgerExportQuerySchema, response: ledgerExportAnswer },
  { method: "get", path: `${S}/billing/usage`, summary: "Compute used per day", tag: "Billing", policy: BILLING_PEOPLE, ok: 200, query: usageQuerySchema, response: usageAnswer },
  { method: "get", path: `${S}/billing/invoices`, summary: "Invoices with their hosted page and PDF links (JSON, or CSV with total_cents and total_amount); read tokens may read them", tag: "Billing", policy: BILLING_READERS, ok: 200, produces: "json-or-csv", query: invoicesQuerySchema, response: invoicesAnswer },
  { method: "get", path: `${S}/billing/invoices/{invoiceId}`, summary: "An invoice reconciled with the ledger; read tokens may read it", tag: "Billing", policy: BILLING_READERS, ok: 200, response: invoiceAnswer },
  { method: "get", path: `${S}/billing/details`, summary: "Billing e-mail, address and tax ID printed on invoices", tag: "Billing", policy: BILLING_PEOPLE, ok: 200, response: billingDetailsAnswer },
  { method: "put", path: `${S}/billing/overage`, summary: "Switch overage on or off within what a platform admin permits (owners; 409 naming overageOn when it is not permitted; the same value again changes nothing)", tag: "Billing", policy: OWNERS_ONLY, ok: 200, body: overageSwitchSchema, response: overageSwitchAnswer },
  { method: "put", path: `${S}/billing/details`, summary: "Set the billing e-mail, address and tax ID (owners; tax ID is free text, no tax computed)", tag: "Billing", policy: OWNERS_ONLY, ok: 200, body: billingDetailsSchema, response: billingDetailsAnswer },
  { method: "post", path: "/api/v1/stripe/webhook", summary: "Stripe's signed event deliveries (for Stripe only)", tag: "Billing", policy: PUBLIC, ok: 200, internal: true, response: stripeWebhookAnswer },
  // Admin
  { method: "get", path: "/api/v1/admin/studios", summary: "Every studio with its usage", tag: "Admin", policy: PLATFORM_ADMIN, ok: 200, response: adminStudiosAnswer },
  { method: "get", path: "/api/v1/admin/studios/{studioId}", summary: "A studio, as the platform sees it", tag: "Admin", policy: PLATFORM_ADMIN, ok: 200, response: adminStudioAnswer },
  { method: "get", path: "/api/v1/admin/studios/{studioId}/quotas", summary: "A studio's quotas", tag: "Admin", policy: PLATFORM_ADMIN, ok: 200, response: quotasAnswer },
  { method: "patch", path: "/api/v1/admin/studios/{studioId}/quotas", summary: "Change a studio's quotas", tag: "Admin", policy: PLATFORM_ADMIN, ok: 200, body: quotaPatchSchema, response: quotasPatchAnswer },
  { method: "get", path: "/api/v1/admin/studios/{studioId}/adjustments", summary: "Credit adjustments of a studio", tag: "Admin", policy: PLATFORM_ADMIN, ok: 200, response: adjustmentsAnswer },
  { method: "post", path: "/api/v1/admin/studios/{studioId}/adjustments", summary: "Adjust a studio's credit", tag: "Admin", policy: PLATFORM_ADMIN, ok: 201, body: adjustmentSchema, response: adjustmentPostAnswer },
  { method: "post", path: "/api/v1/admin/studios/{studioId}/refunds", summary: "Refund (part of) a pack purchase through Stripe; its minutes are taken back", tag: "Admin", policy: PLATFORM_ADMIN, ok: 201, body: adminRefundSchema, response: refundAnswer },
  { method: "put", path: "/api/v1/admin/studios/{studioId}/status", summary: "Suspend or reinstate a studio", tag: "Admin", policy: PLATFORM_ADMIN, ok: 200, body: statusChangeSchema, response: statusAnswer },
  { method: "get", path: "/api/v1/admin/users", summary: "Every user", tag: "Admin", policy: PLATFORM_ADMIN, ok: 200, response: usersAnswer },
  { method: "patch", path: "/api/v1/admin/users/{userId}", summary: "Grant or revoke platform admin", tag: "Admin", policy: PLATFORM_ADMIN, ok: 200, body: platformRoleSchema, response: userPatchAnswer },
  { method: "get", path: "/api/v1/admin/audit", summary: "The audit log (JSON or CSV)", tag: "Admin", policy: PLATFORM_ADMIN, ok: 200, produces: "json-or-csv", query: auditQuerySchema, response: auditAnswer },
  { method: "get", path: "/api/v1/admin/finance", summary: "Revenue and usage across studios, and meter events that failed for good (format=csv: the reconciliation per studio and month, ms and minutes, cents and dollars)", tag: "Admin", policy: PLATFORM_ADMIN, ok: 200, produces: "json-or-csv", query: financeQuerySchema, response: financeAnswer },
  { method: "post", path: "/api/v1/admin/finance/meter-events/{outboxId}/retry", summary: "Queue a failed meter event again, as it was or under a new Stripe identifier (audited; 202 queued, 200 unchanged)", tag: "Admin", policy: PLATFORM_ADMIN, ok: 202, alsoOk: [200], body: meterRetrySchema, response: meterRetryAnswer },
  { method: "get", path: "/api/v1/admin/queue", summary: "The queue: running and waiting chunks", tag: "Admin", policy: PLATFORM_ADMIN, ok: 200, response: queueAnswer },
  // The document itself
  { method: "get", path: "/api/v1/openapi.json", summary: "This OpenAPI document", tag: "Reference", policy: PUBLIC, ok: 200, response: openApiDocumentAnswer },
];
