/**
 * The authorisation matrix: every route method × every kind of caller, driven from one table.
 * A new route adds one row to ROUTES; the coverage test below fails until it does.
 * Expected statuses are written out here from the policy in the contract (not read from the code),
 * so a guard that drifts from the contract fails a cell.
 */
import { createEndpoint, queueWebhookEvent } from "@/lib/webhooks/webhooks";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { User } from "@/db/schema";
import { HTTP_METHODS, type HttpMethod } from "@/lib/api/methods";
import { startMailFake, type MailFake } from "@/lib/fakes/smtp-fake";
import { getDb } from "@/db/client";
import { invoices } from "@/db/schema";
import { billingConfig, configureBilling, fakeStripeClient } from "@/lib/billing/stripe";
import { startStripeFake, type StripeFake } from "@/lib/fakes/stripe";
import { appendLedgerEntry } from "@/lib/ledger/ledger";
import { submitSweep } from "@/lib/queue/submit";
import { saveCatalogue, submitCheck } from "@/lib/catalogues/store";
import { saveSnapshot } from "@/lib/snapshots/store";
import { closeTestDb, useFreshDb } from "../helpers/db";
import { puckSpec } from "./sweeps/support";
import { makeInvite, makePasswordReset, makeStudio, makeToken, makeUser, uniqueEmail } from "../helpers/factories";
import { call, errorOf, sessionCookie } from "../helpers/http";
import { concretePath, loadRoute, routeFolders, routePolicies, serverActionFiles, UNGUARDED_ROUTES, unguardedActions, unguardedHandlers } from "../helpers/routes";
import { otherMethods } from "@/lib/api/methods";
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";

const ACTORS = [
  "anonymous",
  "owner",
  "engineer",
  "finance",
  "adminNotMember",
  "otherStudioMember",
  "tokenRead",
  "tokenWrite",
  "tokenRevoked",
  "otherStudioToken",
] as const;
type ActorName = (typeof ACTORS)[number];
type Expectation = Record<ActorName, number>;

/** A fresh world per cell, so a mutation in one cell never changes what another cell sees. */
interface World {
  studioId: string;
  /** A queued two-axis sweep of the studio (nothing runs it here). */
  sweepId: string;
  /** A two-object catalogue of the studio and a queued check of it. */
  catalogueId: string;
  checkId: string;
  /** A two-disc snapshot of the studio. */
  snapshotId: string;
  subjectUserId: string; // a spare engineer of the studio, the target of member changes
  pendingInviteId: string;
  spareTokenId: string;
  resetSecret: string;
  publicInviteSecret: string;
  /** An invoice of the studio (as the webhook would have mirrored it). */
  invoiceId: string;
  /** A Checkout session of the studio at the Stripe fake (open, unpaid). */
  checkoutSessionId: string;
  /** A webhook endpoint of the studio and an event queued to it. */
  webhookEndpointId: string;
  webhookEventId: string;
  /** An invite addressed to each person-actor (to a third studio), so accepting can succeed. */
  inviteFor: Partial<Record<ActorName, string>>;
  auth: Record<ActorName, { cookie?: string; bearer?: string }>;
}

async function buildWorld(): Promise<World> {
  const people: Partial<Record<ActorName, User>> = {};
  for (const name of ["owner", "engineer", "finance", "otherStudioMember"] as const) people[name] = await makeUser({ name });
  people.adminNotMember = await makeUser({ name: "operator", isAdmin: true });
  const subject = await makeUser({ name: "subject" });
  const studioId = await makeStudio("Pebble Ferry Works", [
    { user: people.owner!, role: "owner" },
    { user: people.engineer!, role: "engineer" },
    { user: people.finance!, role: "finance" },
    { user: subject, role: "engineer" },
  ]);
  const otherStudioId = await makeStudio("Loam Comet Arcade", [{ user: people.otherStudioMember!, role: "owner" }]);
  const thirdStudioId = await makeStudio("Kelp Lantern Games", []);
  const inviteFor: World["inviteFor"] = {};
  for (const [name, user] of Object.entries(people)) inviteFor[name as ActorName] = (await makeInvite(thirdStudioId, user.email, "engineer")).secret;
  const auth = { anonymous: {} } as World["auth"];
  for (const [name, user] of Object.entries(people)) auth[name as ActorName] = { cookie: await sessionCookie(user) };
  auth.tokenRead = { bearer: (await makeToken(studioId, ["read"])).secret };
  auth.tokenWrite = { bearer: (await makeToken(studioId, ["write"])).secret };
  auth.tokenRevoked = { bearer: (await makeToken(studioId, ["read", "write"], { revoked: true })).secret };
  auth.otherStudioToken = { bearer: (await makeToken(otherStudioId, ["read", "write"])).secret };
  await appendLedgerEntry(await getDb(), { studioId, kind: "adjustment", computeMs: 60 * 60_000, idempotencyKey: `matrix:${studioId}`, memo: "test grant" });
  const sweep = await submitSweep(await getDb(), studioId, { spec: puckSpec() });
  const invoiceId = `in_matrix_${studioId}`;
  await (await getDb()).insert(invoices).values({ id: invoiceId, studioId, status: "open", periodStart: new Date(Date.now() - 86_400_000), periodEnd: new Date(), lines: [] });
  const checkoutSession = await billingConfig().stripe.checkout.sessions.create({
    mode: "payment",
    line_items: [{ price_data: { currency: "usd", unit_amount: 900, product_data: { name: "Matrix pack" } }, quantity: 1 }],
    metadata: { studio_id: studioId },
    success_url: "http://localhost:3000/done",
  });
  const { catalogue } = await saveCatalogue(await getDb(), studioId, {
    name: "Pebble Ferry pieces",
    fileName: "pieces.csv",
    mediaType: "text/csv",
    bytes: new TextEncoder().encode(MATRIX_CATALOGUE_CSV),
    createdByUserId: null,
  });
  const check = await submitCheck(await getDb(), studioId, catalogue, { settings: MATRIX_CHECK_SETTINGS, createdByUserId: null });
  const { endpoint } = await createEndpoint(await getDb(), studioId, people.owner!, { url: "http://localhost:9/kd-hooks", events: ["sweep.finished"] });
  const webhookEventId = (await queueWebhookEvent(await getDb(), { studioId, type: "sweep.finished", subject: `matrix:${studioId}`, data: {} })) as string;
  const snapshot = await saveSnapshot(await getDb(), studioId, { name: "Ferry deck", fileName: "deck.json", bytes: new TextEncoder().encode(MATRIX_SNAPSHOT_JSON), createdByUserId: null });
  return {
    studioId,
    sweepId: sweep.id,
    catalogueId: catalogue.id,
    checkId: check.id,
    snapshotId: snapshot.id,
    subjectUserId: subject.id,
    pendingInviteId: (await makeInvite(studioId, uniqueEmail("pending"), "finance")).id,
    spareTokenId: (await makeToken(studioId, ["read"])).id,
    resetSecret: await makePasswordReset(subject.id),
    publicInviteSecret: (await makeInvite(studioId, uniqueEmail("public"), "engineer")).secret,
    invoiceId,
    checkoutSessionId: checkoutSession.id,
    webhookEndpointId: endpoint.id,
    webhookEventId,
    inviteFor,
    auth,
  };
}

/** Two pieces of an invented ferry-loading game. */
const MATRIX_CATALOGUE_CSV = "name,mass_kg,radius_m,top_speed_m_per_s,restitution\nferry crate,2,0.3,2,0.5\nrope coil,0.5,0.2,3,0.3\n";
const MATRIX_CHECK_SETTINGS = { dtS: 1 / 60, substeps: 8, integrator: "symplectic-euler", stiffness: 5_000, speedSteps: 2, offsets: [0] };

/** Two crates on an invented ferry deck. */
const MATRIX_SNAPSHOT_JSON = JSON.stringify({ bodies: [{ xM: 0, yM: 0, vxMPerS: 1, vyMPerS: 0, massKg: 2, radiusM: 0.3 }, { xM: 1, yM: 0, vxMPerS: 0, vyMPerS: 0, massKg: 2, radiusM: 0.3 }] });

function snapshotForm(): FormData {
  const form = new FormData();
  form.set("file", new Blob([MATRIX_SNAPSHOT_JSON], { type: "application/json" }), "deck.json");
  return form;
}

function catalogueForm(): FormData {
  const form = new FormData();
  form.set("file", new Blob([MATRIX_CATALOGUE_CSV], { type: "text/csv" }), "pieces.csv");
  return form;
}

interface RouteRow {
  /** The route folder under app/api, as Next names it. */
  route: string;
  method: HttpMethod;
  params?: (w: World, actor: ActorName) => Record<string, string>;
  body?: (w: World) => unknown;
  expect: Expectation;
}

const row = (statusFor: (actor: ActorName) => number): Expectation =>
  Object.fromEntries(ACTORS.map((a) => [a, statusFor(a)])) as Expectation;

// The policies of the contract, as caller → status.
const PUBLIC = (ok: number) => row(() => ok);
const SIGNED_IN_PERSON = (ok: number) =>
  row((a) => (a === "anonymous" || a === "tokenRevoked" ? 401 : a.startsWith("token") || a === "otherStudioToken" ? 403 : ok));
const ADMIN_ONLY = (ok: number) =>
  row((a) => ({ anonymous: 401, tokenRevoked: 401, adminNotMember: ok })[a as string] ?? 403);
const STUDIO_READ_TOKENS_OK = (ok: number) =>
  row(
    (a) =>
      ({
        anonymous: 401,
        owner: ok,
        engineer: ok,
        finance: ok,
        adminNotMember: 404,
        otherStudioMember: 404,
        tokenRead: ok,
        tokenWrite: ok,
        tokenRevoked: 401,
        otherStudioToken: 404,
      })[a],
  );
const STUDIO_READ_NO_TOKENS = (ok: number) =>
  row((a) => (a === "tokenRead" || a === "tokenWrite" ? 403 : STUDIO_READ_TOKENS_OK(ok)[a]));
const OWNER_MANAGES = (ok: number) =>
  row((a) => (a === "engineer" || a === "finance" ? 403 : STUDIO_READ_NO_TOKENS(ok)[a]));

const studio = (w: World) => ({ studioId: w.studioId });
// Money: owners and finance people; engineers 403; API tokens never (403).
const BILLING_PEOPLE_ROW = (ok: number) => row((a) => (a === "finance" ? ok : OWNER_MANAGES(ok)[a]));
// Money records for bookkeeping tools: owners and finance, and read (or write) tokens; engineers 403.
const BILLING_READERS_ROW = (ok: number) => row((a) => (a === "engineer" ? 403 : STUDIO_READ_TOKENS_OK(ok)[a]));
const sweep = (w: World) => ({ studioId: w.studioId, sweepId: w.sweepId });
const cell = (w: World) => ({ studioId: w.studioId, sweepId: w.sweepId, index: "0" });
const catalogue = (w: World) => ({ studioId: w.studioId, catalogueId: w.catalogueId });
const check = (w: World) => ({ studioId: w.studioId, catalogueId: w.catalogueId, checkId: w.checkId });
const snapshotParams = (w: World) => ({ studioId: w.studioId, snapshotId: w.snapshotId });
// Sweep work: engineers and owners, and write tokens; finance and read tokens are refused.
const SWEEP_WRITERS = (ok: number) =>
  row((a) => (a === "finance" || a === "tokenRead" ? 403 : STUDIO_READ_TOKENS_OK(ok)[a]));

export const ROUTES: RouteRow[] = [
  { route: "v1/signup", method: "POST", body: () => ({ email: uniqueEmail("signup"), password: "tidepool-crates", name: "New Person" }), expect: PUBLIC(202) },
  { route: "v1/password-reset", method: "POST", body: () => ({ email: uniqueEmail("nobody") }), expect: PUBLIC(202) },
  { route: "v1/password-reset/confirm", method: "POST", body: (w) => ({ token: w.resetSecret, password: "a-new-long-password" }), expect: PUBLIC(200) },
  { route: "v1/me", method: "GET", expect: SIGNED_IN_PERSON(200) },
  // A token presents itself (its studio and scopes); people are told to use /me.
  { route: "v1/token", method: "GET", expect: row((a) => (a === "anonymous" || a === "tokenRevoked" ? 401 : a === "tokenRead" || a === "tokenWrite" || a === "otherStudioToken" ? 200 : 403)) },
  { route: "v1/me/sessions", method: "DELETE", expect: SIGNED_IN_PERSON(200) },
  { route: "v1/studios", method: "GET", expect: SIGNED_IN_PERSON(200) },
  { route: "v1/studios", method: "POST", body: () => ({ name: "Driftwood Puck Co" }), expect: SIGNED_IN_PERSON(201) },
  { route: "v1/studios/[studioId]", method: "GET", params: studio, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/studios/[studioId]/overview", method: "GET", params: studio, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/studios/[studioId]/members", method: "GET", params: studio, expect: STUDIO_READ_TOKENS_OK(200) },
  {
    route: "v1/studios/[studioId]/members/[userId]",
    method: "PATCH",
    params: (w) => ({ studioId: w.studioId, userId: w.subjectUserId }),
    body: () => ({ role: "finance" }),
    expect: OWNER_MANAGES(200),
  },
  {
    route: "v1/studios/[studioId]/members/[userId]",
    method: "DELETE",
    params: (w) => ({ studioId: w.studioId, userId: w.subjectUserId }),
    expect: OWNER_MANAGES(200),
  },
  // Owners only (docs/api.md): invitees' addresses are not for every member.
  { route: "v1/studios/[studioId]/invites", method: "GET", params: studio, expect: OWNER_MANAGES(200) },
  {
    route: "v1/studios/[studioId]/invites",
    method: "POST",
    params: studio,
    body: () => ({ email: uniqueEmail("invitee"), role: "engineer" }),
    expect: OWNER_MANAGES(201),
  },
  {
    route: "v1/studios/[studioId]/invites/[inviteId]",
    method: "DELETE",
    params: (w) => ({ studioId: w.studioId, inviteId: w.pendingInviteId }),
    expect: OWNER_MANAGES(200),
  },
  // Owners only (docs/api.md): token names, prefixes and last use are not for every member.
  { route: "v1/studios/[studioId]/tokens", method: "GET", params: studio, expect: OWNER_MANAGES(200) },
  {
    route: "v1/studios/[studioId]/tokens",
    method: "POST",
    params: studio,
    body: () => ({ name: "ci uploader", scopes: ["read"] }),
    expect: OWNER_MANAGES(201),
  },
  {
    route: "v1/studios/[studioId]/tokens/[tokenId]",
    method: "DELETE",
    params: (w) => ({ studioId: w.studioId, tokenId: w.spareTokenId }),
    expect: OWNER_MANAGES(200),
  },
  { route: "v1/invites/[token]", method: "GET", params: (w) => ({ token: w.publicInviteSecret }), expect: PUBLIC(200) },
  {
    route: "v1/invites/[token]/accept",
    method: "POST",
    params: (w, actor) => ({ token: w.inviteFor[actor] ?? w.publicInviteSecret }),
    expect: SIGNED_IN_PERSON(200),
  },
  { route: "v1/studios/[studioId]/quotes", method: "POST", params: studio, body: () => ({ spec: puckSpec() }), expect: SWEEP_WRITERS(200) },
  { route: "v1/studios/[studioId]/sweeps", method: "GET", params: studio, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/studios/[studioId]/sweeps", method: "POST", params: studio, body: () => ({ spec: puckSpec() }), expect: SWEEP_WRITERS(201) },
  { route: "v1/studios/[studioId]/sweeps/[sweepId]", method: "GET", params: sweep, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/studios/[studioId]/sweeps/[sweepId]/cancel", method: "POST", params: sweep, expect: SWEEP_WRITERS(200) },
  { route: "v1/studios/[studioId]/sweeps/[sweepId]/cells", method: "GET", params: sweep, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/studios/[studioId]/sweeps/[sweepId]/cells/[index]", method: "GET", params: cell, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/studios/[studioId]/sweeps/[sweepId]/cells/[index]/rerun", method: "POST", params: cell, expect: SWEEP_WRITERS(201) },
  { route: "v1/studios/[studioId]/sweeps/[sweepId]/cells/[index]/rerun/quote", method: "POST", params: cell, body: () => ({ dtFactor: 0.5 }), expect: SWEEP_WRITERS(200) },
  { route: "v1/studios/[studioId]/sweeps/[sweepId]/envelope", method: "GET", params: sweep, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/studios/[studioId]/catalogues", method: "GET", params: studio, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/studios/[studioId]/catalogues", method: "POST", params: studio, body: () => catalogueForm(), expect: SWEEP_WRITERS(201) },
  { route: "v1/studios/[studioId]/catalogues/[catalogueId]", method: "GET", params: catalogue, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/studios/[studioId]/catalogues/[catalogueId]/file", method: "GET", params: catalogue, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/studios/[studioId]/catalogues/[catalogueId]/quote", method: "POST", params: catalogue, body: () => ({ settings: MATRIX_CHECK_SETTINGS }), expect: SWEEP_WRITERS(200) },
  { route: "v1/studios/[studioId]/catalogues/[catalogueId]/checks", method: "GET", params: catalogue, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/studios/[studioId]/catalogues/[catalogueId]/checks", method: "POST", params: catalogue, body: () => ({ settings: MATRIX_CHECK_SETTINGS }), expect: SWEEP_WRITERS(201) },
  { route: "v1/studios/[studioId]/catalogues/[catalogueId]/checks/[checkId]", method: "GET", params: check, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/studios/[studioId]/catalogues/[catalogueId]/checks/[checkId]/export", method: "GET", params: check, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/studios/[studioId]/snapshots", method: "GET", params: studio, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/studios/[studioId]/snapshots", method: "POST", params: studio, body: () => snapshotForm(), expect: SWEEP_WRITERS(201) },
  { route: "v1/studios/[studioId]/snapshots/[snapshotId]", method: "GET", params: snapshotParams, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/studios/[studioId]/snapshots/[snapshotId]/file", method: "GET", params: snapshotParams, expect: STUDIO_READ_TOKENS_OK(200) },
  { route: "v1/admin/studios", method: "GET", expect: ADMIN_ONLY(200) },
  { route: "v1/admin/studios/[studioId]", method: "GET", params: studio, expect: ADMIN_ONLY(200) },
  { route: "v1/admin/studios/[studioId]/quotas", method: "GET", params: studio, expect: ADMIN_ONLY(200) },
  {
    route: "v1/admin/studios/[studioId]/quotas",
    method: "PATCH",
    params: studio,
    body: () => ({ monthlyComputeMs: 600_000, reason: "matrix" }),
    expect: ADMIN_ONLY(200),
  },
  { route: "v1/admin/studios/[studioId]/adjustments", method: "GET", params: studio, expect: ADMIN_ONLY(200) },
  {
    route: "v1/admin/studios/[studioId]/adjustments",
    method: "POST",
    params: studio,
    body: () => ({ computeMs: 60_000, reason: "matrix goodwill" }),
    expect: ADMIN_ONLY(201),
  },
  {
    route: "v1/admin/studios/[studioId]/status",
    method: "PUT",
    params: studio,
    body: () => ({ status: "suspended", reason: "matrix" }),
    expect: ADMIN_ONLY(200),
  },
  { route: "v1/admin/users", method: "GET", expect: ADMIN_ONLY(200) },
  {
    route: "v1/admin/users/[userId]",
    method: "PATCH",
    params: (w) => ({ userId: w.subjectUserId }),
    body: () => ({ isAdmin: true, reason: "matrix" }),
    expect: ADMIN_ONLY(200),
  },
  { route: "v1/admin/audit", method: "GET", expect: ADMIN_ONLY(200) },
  { route: "v1/admin/queue", method: "GET", expect: ADMIN_ONLY(200) },
  { route: "v1/dev/mail", method: "GET", expect: ADMIN_ONLY(200) },
  { route: "v1/openapi.json", method: "GET", expect: PUBLIC(200) },
  { route: "health", method: "GET", expect: PUBLIC(200) },
  { route: "ready", method: "GET", expect: PUBLIC(200) },
  { route: "metrics", method: "GET", expect: PUBLIC(200) },
  { route: "v1/studios/[studioId]/billing", method: "GET", params: studio, expect: BILLING_PEOPLE_ROW(200) },
  { route: "v1/studios/[studioId]/billing/checkout", method: "POST", params: studio, body: () => ({ packId: "pack_tapout" }), expect: BILLING_PEOPLE_ROW(201) },
  { route: "v1/studios/[studioId]/billing/checkout/[sessionId]", method: "POST", params: (w) => ({ studioId: w.studioId, sessionId: w.checkoutSessionId }), expect: BILLING_PEOPLE_ROW(200) },
  { route: "v1/studios/[studioId]/billing/ledger", method: "GET", params: studio, expect: BILLING_READERS_ROW(200) },
  { route: "v1/studios/[studioId]/billing/ledger/sweeps", method: "GET", params: studio, expect: BILLING_READERS_ROW(200) },
  { route: "v1/studios/[studioId]/billing/ledger/sweeps/[sweepId]", method: "GET", params: sweep, expect: BILLING_READERS_ROW(200) },
  { route: "v1/studios/[studioId]/billing/ledger/export", method: "GET", params: studio, expect: BILLING_READERS_ROW(200) },
  { route: "v1/studios/[studioId]/billing/usage", method: "GET", params: studio, expect: BILLING_PEOPLE_ROW(200) },
  { route: "v1/studios/[studioId]/billing/invoices", method: "GET", params: studio, expect: BILLING_READERS_ROW(200) },
  {
    route: "v1/studios/[studioId]/billing/invoices/[invoiceId]",
    method: "GET",
    params: (w) => ({ studioId: w.studioId, invoiceId: w.invoiceId }),
    expect: BILLING_READERS_ROW(200),
  },
  { route: "v1/studios/[studioId]/billing/details", method: "GET", params: studio, expect: BILLING_PEOPLE_ROW(200) },
  // Off needs no admin permission: the owner gets 200 (on without it is a 409, tests/integration/billing/overage-switch.test.ts).
  { route: "v1/studios/[studioId]/billing/overage", method: "PUT", params: studio, body: () => ({ overageOn: false }), expect: OWNER_MANAGES(200) },
  // Owners only; the body is valid, so an owner reaches the Stripe customer update (the fake) and gets 200.
  { route: "v1/studios/[studioId]/billing/details", method: "PUT", params: studio, body: () => ({ billingEmail: "books@gannetyard.test", address: null, taxId: "DE 123456789" }), expect: OWNER_MANAGES(200) },
  { route: "v1/admin/finance", method: "GET", expect: ADMIN_ONLY(200) },
  // No such outbox row: an admin passes the guard and gets 404 for the meter event.
  { route: "v1/admin/finance/meter-events/[outboxId]/retry", method: "POST", params: () => ({ outboxId: "999999" }), body: () => ({ reason: "matrix check" }), expect: ADMIN_ONLY(404) },
  // The studio has no purchase to refund: an admin passes the guard and gets 404 for the purchase.
  { route: "v1/admin/studios/[studioId]/refunds", method: "POST", params: studio, body: (w) => ({ sessionId: w.checkoutSessionId, reason: "matrix check" }), expect: ADMIN_ONLY(404) },
  // Webhook endpoints: owners only, never tokens.
  { route: "v1/studios/[studioId]/webhooks", method: "GET", params: studio, expect: OWNER_MANAGES(200) },
  { route: "v1/studios/[studioId]/webhooks", method: "POST", params: studio, body: () => ({ url: "https://hooks.pebble-ferry.test/kd", events: ["sweep.finished", "balance.low"] }), expect: OWNER_MANAGES(201) },
  { route: "v1/studios/[studioId]/webhooks/[endpointId]", method: "DELETE", params: (w) => ({ studioId: w.studioId, endpointId: w.webhookEndpointId }), expect: OWNER_MANAGES(200) },
  { route: "v1/studios/[studioId]/webhooks/[endpointId]/deliveries", method: "GET", params: (w) => ({ studioId: w.studioId, endpointId: w.webhookEndpointId }), expect: OWNER_MANAGES(200) },
  {
    route: "v1/studios/[studioId]/webhooks/[endpointId]/deliveries/[eventId]/resend",
    method: "POST",
    params: (w) => ({ studioId: w.studioId, endpointId: w.webhookEndpointId, eventId: w.webhookEventId }),
    expect: OWNER_MANAGES(202),
  },
  // Stripe's deliveries are public; without a valid signature every caller gets 400 and nothing happens.
  { route: "v1/stripe/webhook", method: "POST", body: () => ({ id: "evt_matrix", type: "invoice.paid", data: { object: { id: "in_matrix" } } }), expect: PUBLIC(400) },
];

let mailFake: MailFake;
let stripeFake: StripeFake;
beforeAll(async () => {
  await useFreshDb();
  mailFake = await startMailFake({ port: 0 });
  stripeFake = await startStripeFake({ port: 0 });
  configureBilling({ stripe: fakeStripeClient(stripeFake.port), webhookSecret: "whsec_matrix_only", mode: "fake" });
});
afterAll(async () => {
  configureBilling(undefined);
  await stripeFake.close();
  await mailFake.close();
  await closeTestDb();
});

describe("every route method has a row, and every other method answers 405", () => {
  it("lists each policy-guarded handler in ROUTES and nothing that does not exist", async () => {
    const exported = (await routePolicies()).map((p) => `${p.method} ${p.route}`);
    const table = ROUTES.map((r) => `${r.method} ${r.route}`);
    expect(exported.sort()).toEqual([...table].sort());
  });

  it("fails on any route method exported without a policy (every handler goes through withAuth)", async () => {
    for (const route of routeFolders()) {
      if (route in UNGUARDED_ROUTES) continue;
      expect(unguardedHandlers(await loadRoute(route)), `app/api/${route}/route.ts`).toEqual([]);
    }
    // The check itself catches a handler that skipped the guard.
    expect(unguardedHandlers({ ...otherMethods(["GET"]), GET: async () => new Response("open") })).toEqual(["GET"]);
  });

  it("fails on any server action without a policy", async () => {
    for (const file of serverActionFiles()) expect(unguardedActions((await import(/* @vite-ignore */ file)) as Record<string, unknown>), file).toEqual([]);
    // The scanner finds a "use server" module, and an unguarded action in it is reported.
    const dir = mkdtempSync(path.join(tmpdir(), "kd-actions-"));
    writeFileSync(path.join(dir, "actions.ts"), '"use server";\nexport async function launch() {}\n');
    writeFileSync(path.join(dir, "plain.ts"), "export const x = 1;\n");
    expect(serverActionFiles([dir])).toEqual([path.join(dir, "actions.ts")]);
    expect(unguardedActions({ launch: async () => undefined, guarded: Object.assign(async () => undefined, { policy: { access: "admin" } }) })).toEqual(["launch"]);
  });

  it("answers 405 JSON with an Allow header for the methods a route does not support", async () => {
    for (const route of routeFolders()) {
      if (route in UNGUARDED_ROUTES) continue;
      const mod = await loadRoute(route);
      const allowed = HTTP_METHODS.filter((m) => (mod[m] as { policy?: unknown } | undefined)?.policy);
      for (const method of HTTP_METHODS.filter((m) => !allowed.includes(m))) {
        expect(mod[method], `${method} ${route} must be exported (as 405)`).toBeTypeOf("function");
        const { status, body, res } = await call(mod[method], { method, path: concretePath(route, {}) });
        expect(status, `${method} ${route}`).toBe(405);
        expect(errorOf(body).code).toBe("method_not_allowed");
        const allow = (res.headers.get("allow") ?? "").split(", ");
        for (const m of allowed) expect(allow).toContain(m);
        expect(allow).not.toContain(method);
      }
      // OPTIONS reports exactly the supported methods (not the 405 stubs).
      const options = await call(mod.OPTIONS, { method: "OPTIONS", path: concretePath(route, {}) });
      expect(options.status).toBe(204);
      const listed = (options.res.headers.get("allow") ?? "").split(", ").filter((m) => (HTTP_METHODS as readonly string[]).includes(m));
      expect(listed.sort(), `OPTIONS ${route}`).toEqual([...allowed].sort());
    }
  });

  it("answers unknown /api paths with 404 JSON for every method", async () => {
    const mod = await loadRoute("[...path]");
    for (const method of [...HTTP_METHODS, "OPTIONS"] as const) {
      const { status, body } = await call(mod[method], { method, path: "/api/v1/crates/launch", params: { path: ["v1", "crates", "launch"] } });
      expect(status).toBe(404);
      expect(errorOf(body).code).toBe("not_found");
    }
  });
});

describe.each(ROUTES)("$method /api/$route", (routeRow) => {
  it.each(ACTORS.map((actor) => ({ actor, status: routeRow.expect[actor] })))("$actor → $status", async ({ actor, status }) => {
    const world = await buildWorld();
    const mod = await loadRoute(routeRow.route);
    const params = routeRow.params?.(world, actor) ?? {};
    const result = await call(mod[routeRow.method], {
      method: routeRow.method,
      path: concretePath(routeRow.route, params),
      params,
      body: routeRow.body?.(world),
      ...world.auth[actor],
    });
    expect(result.status, JSON.stringify(result.body)).toBe(status);
    if (status >= 400) {
      const error = errorOf(result.body);
      expect(typeof error.code).toBe("string");
      expect(error.message.length).toBeGreaterThan(0);
    }
  });
});
