import { sql } from "drizzle-orm";
import {
  bigint,
  boolean,
  check,
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
// Sweeps, their chunks and cells, the per-studio result cache, and the compute ledger.

export const SWEEP_STATUSES = ["queued", "running", "paused", "done", "failed", "cancelled"] as const;
export type SweepStatus = (typeof SWEEP_STATUSES)[number];
export const CHUNK_STATUSES = ["queued", "running", "done", "cancelled", "failed"] as const;
export type ChunkStatus = (typeof CHUNK_STATUSES)[number];
export const LEDGER_KINDS = ["purchase", "usage", "adjustment", "refund"] as const;
export type LedgerKind = (typeof LEDGER_KINDS)[number];

export const sweeps = pgTable(
  "sweeps",
  {
    id: text("id").primaryKey(),
    studioId: text("studio_id")
      .notNull()
      .references(() => studios.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    /** The parsed spec (defaults filled in), so a restart re-expands exactly the same cells. */
    spec: jsonb("spec").notNull(),
    specHash: text("spec_hash").notNull(),
    status: text("status", { enum: SWEEP_STATUSES }).notNull().default("queued"),
    reason: text("reason"),
    cells: integer("cells").notNull(),
    cellsDone: integer("cells_done").notNull().default(0),
    cachedCells: integer("cached_cells").notNull().default(0),
    chunks: integer("chunks").notNull(),
    chunksDone: integer("chunks_done").notNull().default(0),
    estimatedComputeMs: integer("estimated_compute_ms").notNull(),
    computeMs: integer("compute_ms").notNull().default(0),
    createdByUserId: text("created_by_user_id").references(() => users.id, { onDelete: "set null" }),
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
    status: text("status", { enum: CHUNK_STATUSES }).notNull().default("queued"),
    leaseOwner: text("lease_owner"),
    leaseExpiresAt: ts("lease_expires_at"),
    attempts: integer("attempts").notNull().default(0),
    lastError: text("last_error"),
    computeMs: integer("compute_ms").notNull().default(0),
  },
  (t) => [
    uniqueIndex("sweep_chunks_sweep_index_uq").on(t.sweepId, t.chunkIndex),
    index("sweep_chunks_status_idx").on(t.status, t.id),
    check("sweep_chunks_status_known", sql`${t.status} in ('queued', 'running', 'done', 'cancelled', 'failed')`),
  ],
);

export const sweepCells = pgTable(
  "sweep_cells",
  {
    sweepId: text("sweep_id")
      .notNull()
      .references(() => sweeps.id, { onDelete: "cascade" }),
    cellIndex: integer("cell_index").notNull(),
    scenarioHash: text("scenario_hash").notNull(),
    metrics: jsonb("metrics").notNull(),
    verdict: text("verdict").notNull(),
    reason: text("reason").notNull(),
    fromCache: boolean("from_cache").notNull().default(false),
  },
  (t) => [primaryKey({ columns: [t.sweepId, t.cellIndex] })],
);

/** Results of simulated scenarios per studio: a cell whose scenario hash is here is not run (nor billed) again. */
export const resultCache = pgTable(
  "result_cache",
  {
    studioId: text("studio_id")
      .notNull()
      .references(() => studios.id, { onDelete: "cascade" }),
    scenarioHash: text("scenario_hash").notNull(),
    metrics: jsonb("metrics").notNull(),
    verdict: text("verdict").notNull(),
    reason: text("reason").notNull(),
    createdAt: createdAt(),
  },
  (t) => [primaryKey({ columns: [t.studioId, t.scenarioHash] })],
);

/** Append-only: balance = Σ computeMs; every writer supplies an idempotency key. */
export const ledgerEntries = pgTable(
  "ledger_entries",
  {
    id: serial("id").primaryKey(),
    studioId: text("studio_id")
      .notNull()
      .references(() => studios.id, { onDelete: "cascade" }),
    kind: text("kind", { enum: LEDGER_KINDS }).notNull(),
    computeMs: bigint("compute_ms", { mode: "number" }).notNull(),
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
export type LedgerEntry = typeof ledgerEntries.$inferSelect;

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
    objects: jsonb("objects").notNull(),
    objectCount: integer("object_count").notNull(),
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
    settings: jsonb("settings").notNull(),
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
    scene: jsonb("scene").notNull(),
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
