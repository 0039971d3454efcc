import { sql } from "drizzle-orm";
import {
  boolean,
  check,
  index,
  jsonb,
  pgTable,
  primaryKey,
  serial,
  text,
  timestamp,
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
