import "server-only";
import { sql } from "drizzle-orm";
import {
  bigint,
  bigserial,
  boolean,
  check,
  customType,
  index,
  integer,
  jsonb,
  pgTable,
  primaryKey,
  serial,
  text,
  timestamp,
  uniqueIndex,
} from "drizzle-orm/pg-core";
import type { AnyPgColumn } from "drizzle-orm/pg-core";
// Types only: the schema is the ground floor and takes the domain's words without its code.
import type { CheckSettings } from "../lib/catalogues/check";
import type { CatalogueObject } from "../lib/catalogues/format";
import type { LedgerKind } from "../lib/ledger/kinds";
import type { SnapshotScene } from "../lib/physics/types";
import type { SweepSpec } from "../lib/sweeps/spec";
import type { ChunkStatus, SweepStatus } from "../lib/sweeps/status";

/** Studio roles, in the order the UI lists them. */
export const STUDIO_ROLES = ["owner", "engineer", "finance"] as const;
export type StudioRole = (typeof STUDIO_ROLES)[number];

export const STUDIO_STATUSES = ["active", "suspended"] as const;
export type StudioStatus = (typeof STUDIO_STATUSES)[number];

export const API_TOKEN_SCOPES = ["read", "write"] as const;
export type ApiTokenScope = (typeof API_TOKEN_SCOPES)[number];

const createdAt = () => timestamp("created_at", { withTimezone: true, mode: "date" }).notNull().defaultNow();
const ts = (name: string) => timestamp(name, { withTimezone: true, mode: "date" });

export const users = pgTable(
  "users",
  {
    id: text("id").primaryKey(),
    // Always stored lower-cased so uniqueness is case-insensitive; the check keeps every writer honest.
    email: text("email").notNull().unique(),
    name: text("name").notNull().default(""),
    passwordHash: text("password_hash"),
    isAdmin: boolean("is_admin").notNull().default(false),
    emailVerified: ts("email_verified"),
    // Sessions (JWTs) issued before this instant are refused: set by a password reset, and when the
    // mailbox owner first proves the address on an account someone else may have registered.
    sessionsRevokedAt: ts("sessions_revoked_at"),
    createdAt: createdAt(),
  },
  (t) => [check("users_email_lower", sql`${t.email} = lower(${t.email})`)],
);

export const studios = pgTable(
  "studios",
  {
    id: text("id").primaryKey(),
    name: text("name").notNull(),
    status: text("status", { enum: STUDIO_STATUSES }).notNull().default("active"),
    /** When the queue last gave this studio a chunk: fair share serves the longest-waiting studio first. */
    lastChunkClaimedAt: ts("last_chunk_claimed_at"),
    createdAt: createdAt(),
  },
  (t) => [check("studios_status_known", sql`${t.status} in ('active', 'suspended')`)],
);

export const memberships = pgTable(
  "memberships",
  {
    studioId: text("studio_id")
      .notNull()
      .references(() => studios.id, { onDelete: "cascade" }),
    userId: text("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    role: text("role", { enum: STUDIO_ROLES }).notNull(),
    joinedAt: timestamp("joined_at", { withTimezone: true, mode: "date" }).notNull().defaultNow(),
  },
  (t) => [
    primaryKey({ columns: [t.studioId, t.userId] }),
    index("memberships_user_idx").on(t.userId),
    check("memberships_role_known", sql`${t.role} in ('owner', 'engineer', 'finance')`),
  ],
);

export const invites = pgTable(
  "invites",
  {
    id: text("id").primaryKey(),
    studioId: text("studio_id")
      .notNull()
      .references(() => studios.id, { onDelete: "cascade" }),
    email: text("email").notNull(),
    role: text("role", { enum: STUDIO_ROLES }).notNull(),
    // sha256 of the secret in the mailed link; the secret itself is never stored.
    tokenHash: text("token_hash").notNull().unique(),
    invitedByUserId: text("invited_by_user_id").references(() => users.id, { onDelete: "set null" }),
    expiresAt: ts("expires_at").notNull(),
    acceptedAt: ts("accepted_at"),
    acceptedByUserId: text("accepted_by_user_id").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
  },
  (t) => [
    index("invites_studio_idx").on(t.studioId),
    check("invites_role_known", sql`${t.role} in ('owner', 'engineer', 'finance')`),
  ],
);

export const apiTokens = pgTable(
  "api_tokens",
  {
    id: text("id").primaryKey(),
    studioId: text("studio_id")
      .notNull()
      .references(() => studios.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    // sha256 hex of the full secret.
    tokenHash: text("token_hash").notNull().unique(),
    // The first characters of the secret, kept so owners can tell tokens apart.
    prefix: text("prefix").notNull(),
    scopes: text("scopes").array().notNull(),
    createdByUserId: text("created_by_user_id").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    lastUsedAt: ts("last_used_at"),
    revokedAt: ts("revoked_at"),
  },
  (t) => [index("api_tokens_studio_idx").on(t.studioId)],
);

/** next-auth e-mail provider tokens (next-auth stores them already hashed with the secret). */
export const verificationTokens = pgTable(
  "verification_tokens",
  {
    identifier: text("identifier").notNull(),
    token: text("token").notNull(),
    expires: ts("expires").notNull(),
  },
  (t) => [primaryKey({ columns: [t.identifier, t.token] })],
);

export const passwordResets = pgTable(
  "password_resets",
  {
    id: text("id").primaryKey(),
    userId: text("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    tokenHash: text("token_hash").notNull().unique(),
    expiresAt: ts("expires_at").notNull(),
    usedAt: ts("used_at"),
    createdAt: createdAt(),
  },
  (t) => [index("password_resets_user_idx").on(t.userId)],
);

/**
 * One row per credentials sign-in attempt and per limited action, under a key such as
 * `account:<email>` or `address:<ip>`; the limiter counts recent failures per key.
 */
/**
 * One row per signed-in session (the session cookie's JWT carries its id as `sid`). A session
 * works only while its row exists and is not revoked: sign-out, "sign out everywhere", a password
 * change and losing a studio role end sessions on the server, not only in the browser.
 */
export const userSessions = pgTable(
  "user_sessions",
  {
    id: text("id").primaryKey(),
    userId: text("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    createdAt: createdAt(),
    revokedAt: ts("revoked_at"),
  },
  (t) => [index("user_sessions_user_idx").on(t.userId)],
);
export type UserSession = typeof userSessions.$inferSelect;

export const loginAttempts = pgTable(
  "login_attempts",
  {
    id: serial("id").primaryKey(),
    key: text("key").notNull(),
    succeeded: boolean("succeeded").notNull(),
    createdAt: createdAt(),
  },
  (t) => [index("login_attempts_key_time_idx").on(t.key, t.createdAt)],
);

/** Messages captured by the local mail fake (only written while SMTP_URL is unset). */
export const mailMessages = pgTable(
  "mail_messages",
  {
    id: text("id").primaryKey(),
    fromAddress: text("from_address").notNull().default(""),
    toAddresses: text("to_addresses").notNull(),
    subject: text("subject").notNull().default(""),
    text: text("text").notNull().default(""),
    html: text("html").notNull().default(""),
    links: jsonb("links").$type<string[]>().notNull().default([]),
    receivedAt: timestamp("received_at", { withTimezone: true, mode: "date" }).notNull().defaultNow(),
  },
  (t) => [index("mail_messages_received_idx").on(t.receivedAt)],
);

export type User = typeof users.$inferSelect;
export type Studio = typeof studios.$inferSelect;
export type Membership = typeof memberships.$inferSelect;
export type Invite = typeof invites.$inferSelect;
export type ApiToken = typeof apiTokens.$inferSelect;

// ---------------------------------------------------------------------------
// Sweeps, their chunks, the chunks' packed results (also the per-studio result cache), and the compute ledger.


export const sweeps = pgTable(
  "sweeps",
  {
    id: text("id").primaryKey(),
    studioId: text("studio_id")
      .notNull()
      .references(() => studios.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    /** The parsed spec (defaults filled in), so a restart re-expands exactly the same cells. */
    spec: jsonb("spec").$type<SweepSpec>().notNull(),
    specHash: text("spec_hash").notNull(),
    status: text("status").$type<SweepStatus>().notNull().default("queued"),
    reason: text("reason"),
    cells: integer("cells").notNull(),
    cellsDone: integer("cells_done").notNull().default(0),
    cachedCells: integer("cached_cells").notNull().default(0),
    chunks: integer("chunks").notNull(),
    chunksDone: integer("chunks_done").notNull().default(0),
    /** The quote's expected bill (ms); for sweeps metered by wall clock, the old estimate. */
    estimatedComputeMs: integer("estimated_compute_ms").notNull(),
    /** Billed so far (ms): the sum of the chunks' debits. */
    computeMs: integer("compute_ms").notNull().default(0),
    /**
     * How the sweep is billed (lib/sweeps/metering.ts): "wall-clock" for sweeps submitted before
     * work units (their chunks bill worker wall time, as they did), else the work-unit version.
     */
    metering: text("metering").notNull().default("wall-clock"),
    /** The quote's ceiling (ms): the most the sweep can be billed; reserved until its chunks land. */
    ceilingMs: integer("ceiling_ms").notNull().default(0),
    /** The ceiling shares of the chunks landed so far (ms): reserved = ceilingMs − releasedCeilingMs. */
    releasedCeilingMs: integer("released_ceiling_ms").notNull().default(0),
    /** Work units of the chunks landed so far; the bill is ⌈workUnits / rate⌉ once all have landed. */
    workUnits: bigint("work_units", { mode: "number" }).notNull().default(0),
    /** Running totals of the done cells' verdicts, kept in the transaction that stores each chunk. */
    verdictCounts: jsonb("verdict_counts").$type<Record<string, number>>().notNull().default({}),
    createdByUserId: text("created_by_user_id").references(() => users.id, { onDelete: "set null" }),
    /** A "re-run at a finer dt" names the sweep and cell it re-runs, so its page can compare the two. */
    rerunOfSweepId: text("rerun_of_sweep_id").references((): AnyPgColumn => sweeps.id, { onDelete: "set null" }),
    rerunOfCellIndex: integer("rerun_of_cell_index"),
    createdAt: createdAt(),
    startedAt: ts("started_at"),
    finishedAt: ts("finished_at"),
  },
  (t) => [
    index("sweeps_studio_created_idx").on(t.studioId, t.createdAt),
    check("sweeps_status_known", sql`${t.status} in ('queued', 'running', 'paused', 'done', 'failed', 'cancelled')`),
  ],
);

export const sweepChunks = pgTable(
  "sweep_chunks",
  {
    id: serial("id").primaryKey(),
    sweepId: text("sweep_id")
      .notNull()
      .references(() => sweeps.id, { onDelete: "cascade" }),
    chunkIndex: integer("chunk_index").notNull(),
    firstCell: integer("first_cell").notNull(),
    cellCount: integer("cell_count").notNull(),
    status: text("status").$type<ChunkStatus>().notNull().default("queued"),
    leaseOwner: text("lease_owner"),
    leaseExpiresAt: ts("lease_expires_at"),
    attempts: integer("attempts").notNull().default(0),
    lastError: text("last_error"),
    /** What the chunk was billed (ms). */
    computeMs: integer("compute_ms").notNull().default(0),
    /** The chunk's share of its sweep's ceiling (ms), released when it lands. */
    ceilingMs: integer("ceiling_ms").notNull().default(0),
    /** Work units of the chunk's cells run. */
    workUnits: bigint("work_units", { mode: "number" }).notNull().default(0),
    /** Worker wall time of the chunk (ms): capacity planning only, never billed. */
    wallMs: integer("wall_ms").notNull().default(0),
  },
  (t) => [
    uniqueIndex("sweep_chunks_sweep_index_uq").on(t.sweepId, t.chunkIndex),
    index("sweep_chunks_status_idx").on(t.status, t.id),
    check("sweep_chunks_status_known", sql`${t.status} in ('queued', 'running', 'done', 'cancelled', 'failed')`),
  ],
);

/** PostgreSQL bytea as a Node Buffer / Uint8Array. */
const bytea = customType<{ data: Uint8Array; driverData: Uint8Array }>({ dataType: () => "bytea" });

/**
 * A chunk's results, packed (lib/sweeps/packed.ts: indices, scenario keys, metrics, verdicts,
 * reasons of its cells in index order) as ONE blob: a chunk is written in one statement and read
 * in one, instead of one row per cell. The blob lives in the result store: a file under the data
 * folder (`location`, PGlite) or the `data` column (`DATABASE_URL`, so every host sees it).
 * `cells` counts the cells in the blob: fewer than the chunk's while only its cached cells are
 * known (`complete` false). The studio's result cache is the keys inside its rows' blobs.
 *
 * `recordedSeq` is the row's change cursor: a value of the column's own sequence, taken when the
 * row is inserted (its default) and again whenever the row is rewritten (the partial row made
 * complete by kickdrift_record_chunk, drizzle/0009_queue_functions.sql, sets it to nextval of
 * `sweep_results_recorded_seq_seq`). A sweep's rows are written under its lock, so within one
 * sweep a larger value was committed later: the cells route answers "what changed after cursor N".
 */
export const sweepResults = pgTable(
  "sweep_results",
  {
    id: serial("id").primaryKey(),
    sweepId: text("sweep_id")
      .notNull()
      .references(() => sweeps.id, { onDelete: "cascade" }),
    studioId: text("studio_id")
      .notNull()
      .references(() => studios.id, { onDelete: "cascade" }),
    chunkIndex: integer("chunk_index").notNull(),
    cells: integer("cells").notNull(),
    complete: boolean("complete").notNull(),
    bytes: integer("bytes").notNull(),
    location: text("location"),
    data: bytea("data"),
    recordedSeq: bigserial("recorded_seq", { mode: "bigint" }).notNull(),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex("sweep_results_sweep_chunk_uq").on(t.sweepId, t.chunkIndex),
    index("sweep_results_studio_idx").on(t.studioId, t.id),
    index("sweep_results_sweep_seq_idx").on(t.sweepId, t.recordedSeq),
  ],
);

/** Append-only: balance = Σ computeMs; every writer supplies an idempotency key. */
export const ledgerEntries = pgTable(
  "ledger_entries",
  {
    id: serial("id").primaryKey(),
    studioId: text("studio_id")
      .notNull()
      .references(() => studios.id, { onDelete: "cascade" }),
    kind: text("kind").$type<LedgerKind>().notNull(),
    computeMs: bigint("compute_ms", { mode: "number" }).notNull(),
    /**
     * Usage entries only: the part of the chunk's compute beyond the prepaid balance, metered to
     * Stripe and invoiced monthly (computeMs holds the prepaid part only, so the balance never
     * pays for it twice). A chunk's whole usage is overageMs − computeMs.
     */
    overageMs: bigint("overage_ms", { mode: "number" }).notNull().default(0),
    amountCents: integer("amount_cents").notNull().default(0),
    idempotencyKey: text("idempotency_key").notNull().unique(),
    sweepId: text("sweep_id").references(() => sweeps.id, { onDelete: "set null" }),
    chunkIndex: integer("chunk_index"),
    memo: text("memo").notNull().default(""),
    createdAt: createdAt(),
  },
  (t) => [
    index("ledger_entries_studio_idx").on(t.studioId, t.createdAt),
    check("ledger_entries_kind_known", sql`${t.kind} in ('purchase', 'usage', 'adjustment', 'refund')`),
  ],
);

export type Sweep = typeof sweeps.$inferSelect;
export type SweepChunk = typeof sweepChunks.$inferSelect;
export type SweepResult = typeof sweepResults.$inferSelect;
export type LedgerEntry = typeof ledgerEntries.$inferSelect;

// ---------------------------------------------------------------------------
// Quotas per studio, the outbox of side effects, and the audit log.

/**
 * Per-studio overrides of the plan's limits (lib/quotas/plan.ts). A null column means "the plan
 * default"; a studio without a row has every default.
 */
export const studioQuotas = pgTable(
  "studio_quotas",
  {
    studioId: text("studio_id")
      .primaryKey()
      .references(() => studios.id, { onDelete: "cascade" }),
    /** Compute per calendar month (UTC), integer ms. */
    monthlyComputeMs: bigint("monthly_compute_ms", { mode: "number" }),
    maxRunningSweeps: integer("max_running_sweeps"),
    maxCellsPerSweep: integer("max_cells_per_sweep"),
    maxStepsPerCell: integer("max_steps_per_cell"),
    maxBodies: integer("max_bodies"),
    /** Whether usage beyond the prepaid balance may be metered and invoiced (a platform admin's ceiling). */
    overageAllowed: boolean("overage_allowed"),
    /** The owner's switch within that ceiling (lib/billing/overage-switch.ts); null = on. */
    overageOn: boolean("overage_on"),
    /** The most overage a calendar month may accrue, integer ms. */
    overageCapMs: bigint("overage_cap_ms", { mode: "number" }),
    updatedAt: timestamp("updated_at", { withTimezone: true, mode: "date" }).notNull().defaultNow(),
    updatedByUserId: text("updated_by_user_id").references(() => users.id, { onDelete: "set null" }),
  },
  (t) => [
    check("studio_quotas_non_negative", sql`coalesce(${t.monthlyComputeMs}, 0) >= 0 and coalesce(${t.overageCapMs}, 0) >= 0`),
  ],
);

export const OUTBOX_STATUSES = ["pending", "delivered", "failed"] as const;
export type OutboxStatus = (typeof OUTBOX_STATUSES)[number];

/**
 * Side effects that leave the process (Stripe meter events, e-mail), written in the same
 * transaction as the change that causes them and delivered afterwards by lib/outbox. The
 * idempotency key makes a retried writer a no-op and travels to the receiver where it has one
 * (Stripe's meter-event identifier).
 */
export const outbox = pgTable(
  "outbox",
  {
    id: serial("id").primaryKey(),
    kind: text("kind").notNull(),
    idempotencyKey: text("idempotency_key").notNull().unique(),
    payload: jsonb("payload").notNull(),
    studioId: text("studio_id").references(() => studios.id, { onDelete: "set null" }),
    status: text("status", { enum: OUTBOX_STATUSES }).notNull().default("pending"),
    attempts: integer("attempts").notNull().default(0),
    nextAttemptAt: timestamp("next_attempt_at", { withTimezone: true, mode: "date" }).notNull().defaultNow(),
    /** Held by a dispatcher while it delivers; a lapsed lease makes the row due again. */
    leaseOwner: text("lease_owner"),
    leaseExpiresAt: ts("lease_expires_at"),
    lastError: text("last_error"),
    createdAt: createdAt(),
    deliveredAt: ts("delivered_at"),
  },
  (t) => [
    index("outbox_due_idx").on(t.status, t.nextAttemptAt),
    check("outbox_status_known", sql`${t.status} in ('pending', 'delivered', 'failed')`),
  ],
);

/** Append-only record of who did what to whom, with the values before and after. */
export const auditLog = pgTable(
  "audit_log",
  {
    id: serial("id").primaryKey(),
    /** The acting person (null for the system or a deleted user); the e-mail is kept as it was. */
    actorUserId: text("actor_user_id").references(() => users.id, { onDelete: "set null" }),
    actorLabel: text("actor_label").notNull(),
    /** The studio concerned, kept as text so the record outlives the studio. */
    studioId: text("studio_id"),
    action: text("action").notNull(),
    subjectType: text("subject_type").notNull(),
    subjectId: text("subject_id").notNull(),
    before: jsonb("before"),
    after: jsonb("after"),
    reason: text("reason").notNull().default(""),
    createdAt: createdAt(),
  },
  (t) => [index("audit_log_studio_time_idx").on(t.studioId, t.createdAt), index("audit_log_time_idx").on(t.createdAt)],
);

export type StudioQuotaRow = typeof studioQuotas.$inferSelect;
export type OutboxRow = typeof outbox.$inferSelect;
export type AuditLogRow = typeof auditLog.$inferSelect;

// ---------------------------------------------------------------------------
// Billing: the Stripe customer of each studio, the webhook events already processed, and the
// invoices as Stripe last reported them (re-read on every event, so the order of events is moot).

/** One Stripe customer (and one metered subscription for overage) per studio. */
export const studioBilling = pgTable("studio_billing", {
  studioId: text("studio_id")
    .primaryKey()
    .references(() => studios.id, { onDelete: "cascade" }),
  stripeCustomerId: text("stripe_customer_id").notNull().unique(),
  stripeSubscriptionId: text("stripe_subscription_id"),
  /** Start of the subscription's first period: overage metered earlier counts from here. */
  subscriptionStartedAt: ts("subscription_started_at"),
  /** The last overage subscription that ended (customer.subscription.deleted): the next one is made under a new idempotency key. */
  endedSubscriptionId: text("ended_subscription_id"),
  /** Where invoices are sent besides owners and finance; also the Stripe customer's e-mail. Owners edit it. */
  billingEmail: text("billing_email"),
  /** The postal address printed on invoices (and the Stripe customer's address). */
  billingAddress: jsonb("billing_address").$type<BillingAddress>(),
  /** Free-text tax ID printed on invoices (a custom field "Tax ID"); Kickdrift computes no tax. */
  taxId: text("tax_id"),
  createdAt: createdAt(),
});

export interface BillingAddress {
  line1: string;
  line2: string | null;
  city: string;
  state: string | null;
  postalCode: string;
  /** ISO 3166-1 alpha-2. */
  country: string;
}

/** Webhook events already handled: a second delivery of the same id changes nothing. */
export const stripeEvents = pgTable("stripe_events", {
  id: text("id").primaryKey(),
  type: text("type").notNull(),
  /** What the handler did, e.g. "credited purchase:cs_test_…" or "ignored: session not paid". */
  outcome: text("outcome").notNull().default(""),
  receivedAt: createdAt(),
});

/** Invoices of studios, mirrored from Stripe; `lines` holds each line's period, quantity (ms) and amount. */
export const invoices = pgTable(
  "invoices",
  {
    id: text("id").primaryKey(),
    studioId: text("studio_id")
      .notNull()
      .references(() => studios.id, { onDelete: "cascade" }),
    number: text("number"),
    status: text("status").notNull(),
    currency: text("currency").notNull().default("usd"),
    periodStart: ts("period_start").notNull(),
    periodEnd: ts("period_end").notNull(),
    /** Metered overage on the invoice's lines, integer ms. */
    quantityMs: bigint("quantity_ms", { mode: "number" }).notNull().default(0),
    totalCents: integer("total_cents").notNull().default(0),
    lines: jsonb("lines").$type<InvoiceLineRecord[]>().notNull().default([]),
    finalizedAt: ts("finalized_at"),
    /** When payment is due (Stripe's due_date); an unpaid invoice past it plus the grace period switches overage off. */
    dueAt: ts("due_at"),
    /**
     * When Stripe's invoice.overdue reached us for this invoice while it was owed (the database's
     * clock). Stripe sends it OVERDUE_GRACE_DAYS after the due date (the account's automation), so it
     * starts the overage hold by Stripe's clock; set once, never cleared (paying lifts the hold).
     */
    overdueNoticeAt: ts("overdue_notice_at"),
    /** "overage" (the monthly metered invoice) or "pack" (the paid invoice of a pack purchase). */
    kind: text("kind").$type<InvoiceKind>().notNull().default("overage"),
    /** Stripe's hosted invoice page and PDF (set once the invoice is finalised). */
    hostedInvoiceUrl: text("hosted_invoice_url"),
    invoicePdfUrl: text("invoice_pdf_url"),
    createdAt: createdAt(),
    updatedAt: timestamp("updated_at", { withTimezone: true, mode: "date" }).notNull().defaultNow(),
  },
  (t) => [index("invoices_studio_period_idx").on(t.studioId, t.periodEnd)],
);

export type InvoiceKind = "overage" | "pack";

export interface InvoiceLineRecord {
  id: string;
  description: string;
  /** Unix seconds, as Stripe gives them. */
  periodStart: number;
  periodEnd: number;
  quantityMs: number;
  amountCents: number;
  /**
   * Set on a line that bills one chunk's overage late (its meter event came after its period was
   * invoiced): the chunk's ledger key; the line's period is the period the usage belongs to.
   */
  meterIdentifier?: string;
}

export type StudioBilling = typeof studioBilling.$inferSelect;
export type InvoiceRow = typeof invoices.$inferSelect;

// ---------------------------------------------------------------------------
// Catalogues of a game's objects (versioned per studio and name) and the checks run on them.

/** One version of a catalogue: the file as uploaded (base64 of its bytes), its hash and its parsed objects. */
export const catalogues = pgTable(
  "catalogues",
  {
    id: text("id").primaryKey(),
    studioId: text("studio_id")
      .notNull()
      .references(() => studios.id, { onDelete: "cascade" }),
    /** The catalogue's name; uploads under the same name are its versions 1, 2, … */
    name: text("name").notNull(),
    version: integer("version").notNull(),
    /** SHA-256 (hex) of the file's bytes. */
    contentHash: text("content_hash").notNull(),
    fileName: text("file_name").notNull(),
    mediaType: text("media_type").notNull(),
    fileBase64: text("file_base64").notNull(),
    fileBytes: integer("file_bytes").notNull(),
    format: text("format", { enum: ["csv", "json"] }).notNull(),
    objects: jsonb("objects").$type<CatalogueObject[]>().notNull(),
    objectCount: integer("object_count").notNull(),
    /**
     * When the table was corrected on the upload page before saving, the file as the user uploaded
     * it (the columns above then hold the corrected CSV the objects come from); null otherwise.
     */
    originalFileName: text("original_file_name"),
    originalFileBase64: text("original_file_base64"),
    originalFileBytes: integer("original_file_bytes"),
    originalContentHash: text("original_content_hash"),
    createdByUserId: text("created_by_user_id").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("catalogues_studio_name_version_uq").on(t.studioId, t.name, t.version), index("catalogues_studio_created_idx").on(t.studioId, t.createdAt)],
);

/** A catalogue check: the settings it ran with and the sweep that ran it (quoted, queued and billed as any sweep). */
export const catalogueChecks = pgTable(
  "catalogue_checks",
  {
    id: text("id").primaryKey(),
    studioId: text("studio_id")
      .notNull()
      .references(() => studios.id, { onDelete: "cascade" }),
    catalogueId: text("catalogue_id")
      .notNull()
      .references(() => catalogues.id, { onDelete: "cascade" }),
    sweepId: text("sweep_id")
      .notNull()
      .references(() => sweeps.id, { onDelete: "cascade" }),
    settings: jsonb("settings").$type<CheckSettings>().notNull(),
    createdByUserId: text("created_by_user_id").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
  },
  (t) => [index("catalogue_checks_catalogue_idx").on(t.catalogueId, t.createdAt), uniqueIndex("catalogue_checks_sweep_uq").on(t.sweepId)],
);

/**
 * A scene snapshot: discs and walls exported from a game, stored only when valid. Uploads under the
 * same name are its versions 1, 2, …; the original bytes are kept (downloadable, with their hash).
 */
export const snapshots = pgTable(
  "snapshots",
  {
    id: text("id").primaryKey(),
    studioId: text("studio_id")
      .notNull()
      .references(() => studios.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    version: integer("version").notNull(),
    /** SHA-256 (hex) of the file's bytes. */
    contentHash: text("content_hash").notNull(),
    fileName: text("file_name").notNull(),
    fileBase64: text("file_base64").notNull(),
    fileBytes: integer("file_bytes").notNull(),
    /** The parsed scene (lib/physics/types.ts SnapshotScene, speedScale 1). */
    scene: jsonb("scene").$type<SnapshotScene>().notNull(),
    bodyCount: integer("body_count").notNull(),
    wallCount: integer("wall_count").notNull(),
    createdByUserId: text("created_by_user_id").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("snapshots_studio_name_version_uq").on(t.studioId, t.name, t.version), index("snapshots_studio_created_idx").on(t.studioId, t.createdAt)],
);

export type Snapshot = typeof snapshots.$inferSelect;

export type Catalogue = typeof catalogues.$inferSelect;
export type CatalogueCheck = typeof catalogueChecks.$inferSelect;

export const WEBHOOK_EVENT_TYPES = ["sweep.finished", "sweep.failed", "sweep.paused", "catalogue_check.finished", "balance.low"] as const;
export type WebhookEventType = (typeof WEBHOOK_EVENT_TYPES)[number];

/** An HTTPS endpoint a studio's owners registered for some event types; its secret signs every delivery. */
export const webhookEndpoints = pgTable(
  "webhook_endpoints",
  {
    id: text("id").primaryKey(),
    studioId: text("studio_id")
      .notNull()
      .references(() => studios.id, { onDelete: "cascade" }),
    url: text("url").notNull(),
    eventTypes: text("event_types").array().notNull(),
    /** whsec_ + base64 of 32 random bytes; kept (not hashed) because every delivery is signed with it. */
    secret: text("secret").notNull(),
    createdByUserId: text("created_by_user_id").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    disabledAt: ts("disabled_at"),
  },
  (t) => [index("webhook_endpoints_studio_idx").on(t.studioId)],
);

/**
 * One event a studio's endpoints are told about. The id is derived from what happened (type and
 * subject), so finding the same change twice writes nothing new: receivers deduplicate by it.
 */
export const webhookEvents = pgTable(
  "webhook_events",
  {
    id: text("id").primaryKey(),
    studioId: text("studio_id")
      .notNull()
      .references(() => studios.id, { onDelete: "cascade" }),
    type: text("type").notNull(),
    payload: jsonb("payload").notNull(),
    createdAt: createdAt(),
  },
  (t) => [index("webhook_events_studio_idx").on(t.studioId, t.createdAt)],
);

/** The delivery log: one row per (endpoint, event), updated after every attempt. */
export const webhookDeliveries = pgTable(
  "webhook_deliveries",
  {
    endpointId: text("endpoint_id")
      .notNull()
      .references(() => webhookEndpoints.id, { onDelete: "cascade" }),
    eventId: text("event_id")
      .notNull()
      .references(() => webhookEvents.id, { onDelete: "cascade" }),
    status: text("status", { enum: ["pending", "delivered", "failed"] }).notNull().default("pending"),
    attempts: integer("attempts").notNull().default(0),
    /** HTTP status of the last answer; null when there was none (refused, timed out). */
    lastStatusCode: integer("last_status_code"),
    lastError: text("last_error"),
    /** How many times an owner asked to send it again. */
    resends: integer("resends").notNull().default(0),
    createdAt: createdAt(),
    lastAttemptAt: ts("last_attempt_at"),
    deliveredAt: ts("delivered_at"),
  },
  (t) => [primaryKey({ columns: [t.endpointId, t.eventId] }), index("webhook_deliveries_endpoint_idx").on(t.endpointId, t.createdAt)],
);

export type WebhookEndpoint = typeof webhookEndpoints.$inferSelect;
export type WebhookEvent = typeof webhookEvents.$inferSelect;
export type WebhookDelivery = typeof webhookDeliveries.$inferSelect;
