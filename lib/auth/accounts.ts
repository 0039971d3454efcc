import "server-only";
import { and, eq, isNull } from "drizzle-orm";
import { z } from "@/lib/zod";
import { getDb } from "@/db/client";
import { newId, newSecret, sha256Hex } from "@/db/ids";
import { passwordResets, users, type User } from "@/db/schema";
import { ApiError } from "@/lib/errors";
import { afterResponse } from "@/lib/api/after-response";
import { accountExistsMail, passwordResetMail } from "@/lib/mail/templates";
import { trySendMail } from "@/lib/mail/send";
import { appBaseUrl } from "./config";
import { accountKey, addressKey, isLocked, RANGE_LOGIN_LIMIT, rangeKey, recordAttempt } from "./limiter";
import { consumeRateLimit } from "./rate-limits";
import { endUserSessions } from "./user-sessions";
import { burnPasswordCheck, emailSchema, hashPassword, passwordSchema, verifyPassword } from "./password";
import { displayNameSchema } from "@/lib/api/text";

/** The one message every failed password sign-in gets, whatever the reason (unknown account, wrong password, locked). */
export const LOGIN_ERROR_MESSAGE = "Invalid e-mail or password";

export const PASSWORD_RESET_TTL_MS = 60 * 60_000;

/** A user as the API shows them; the OpenAPI document describes answers with it. */
export const publicUserSchema = z.strictObject({ id: z.string(), email: z.string(), name: z.string(), isAdmin: z.boolean() }).meta({ id: "User" });
export type PublicUser = z.infer<typeof publicUserSchema>;

export function publicUser(user: User): PublicUser {
  return { id: user.id, email: user.email, name: user.name, isAdmin: user.isAdmin };
}

export const nameSchema = displayNameSchema("Name", 100);

export const signUpSchema = z.strictObject({ email: emailSchema, password: passwordSchema, name: nameSchema });

/**
 * Signs up a new account, answering the same whether the address is new or taken: the caller
 * learns nothing about which. Both paths hash the password (the expensive step), and the owner
 * of an existing address gets a mail saying someone tried, sent after the answer.
 */
export async function signUp(input: z.infer<typeof signUpSchema>, address: string): Promise<void> {
  await consumeRateLimit("signupPerAddress", address);
  await consumeRateLimit("signupPerEmail", input.email, "email");
  const db = await getDb();
  const passwordHash = await hashPassword(input.password);
  const [created] = await db
    .insert(users)
    .values({ id: newId("usr"), email: input.email, name: input.name, passwordHash })
    .onConflictDoNothing({ target: users.email })
    .returning({ id: users.id });
  if (!created) {
    const base = appBaseUrl();
    afterResponse("account-exists mail", () => trySendMail(input.email, accountExistsMail({ signInUrl: `${base}/signin`, resetUrl: `${base}/reset` })));
  }
}

/**
 * Password sign-in with limiting per account and per client address. Returns the user, or null
 * for every kind of failure so the caller shows one generic message.
 */
export async function authenticateWithPassword(rawEmail: unknown, rawPassword: unknown, address: string): Promise<User | null> {
  if (typeof rawEmail !== "string" || typeof rawPassword !== "string") return null;
  const email = rawEmail.trim().toLowerCase();
  const password = rawPassword;
  if (email === "" || email.length > 254 || email.includes("\u0000") || password.length > 1000) return null;
  const db = await getDb();
  const keys = [accountKey(email), addressKey(address), rangeKey(address)];
  if (await isLocked(db, keys[0])) return null;
  if (await isLocked(db, keys[1])) return null;
  if (await isLocked(db, keys[2], new Date(), RANGE_LOGIN_LIMIT)) return null;
  const [user] = await db.select().from(users).where(eq(users.email, email));
  let ok = false;
  if (user?.passwordHash) ok = await verifyPassword(password, user.passwordHash);
  else await burnPasswordCheck(password);
  if (!ok || !user) {
    await recordAttempt(db, keys, false);
    return null;
  }
  // A success clears the account's count; the address's count is never cleared by a success,
  // so one working account cannot be used to keep guessing others from the same address.
  await recordAttempt(db, [accountKey(email)], true);
  return user;
}

export const passwordResetRequestSchema = z.strictObject({ email: emailSchema });
export const passwordResetConfirmSchema = z.strictObject({
  token: z.string({ error: "Token is required." }).min(1, { error: "Token is required." }).max(200, { error: "Token is too long." }),
  password: passwordSchema,
});

/** At most this many reset mails per account per hour (common practice against mail flooding). */
const RESET_MAILS_PER_HOUR = 5;

/**
 * Always answers the same, and in the same time, whether or not an account exists: after the
 * rate limits (which count every request alike), the lookup and the mail run after the answer.
 */
export async function requestPasswordReset(email: string, address: string): Promise<void> {
  await consumeRateLimit("resetPerAddress", address);
  await consumeRateLimit("resetPerEmail", email, "email");
  afterResponse("password-reset mail", () => sendPasswordReset(email));
}

async function sendPasswordReset(email: string): Promise<void> {
  const db = await getDb();
  const [user] = await db.select().from(users).where(eq(users.email, email));
  if (!user) return;
  const hourAgo = new Date(Date.now() - 3600_000);
  const recent = await db.select({ createdAt: passwordResets.createdAt }).from(passwordResets).where(eq(passwordResets.userId, user.id));
  if (recent.filter((r) => r.createdAt > hourAgo).length >= RESET_MAILS_PER_HOUR) return;
  const secret = newSecret();
  await db.insert(passwordResets).values({
    id: newId("pwr"),
    userId: user.id,
    tokenHash: sha256Hex(secret),
    expiresAt: new Date(Date.now() + PASSWORD_RESET_TTL_MS),
  });
  await trySendMail(user.email, passwordResetMail({ url: `${appBaseUrl()}/reset/${encodeURIComponent(secret)}` }));
}

export async function confirmPasswordReset(input: z.infer<typeof passwordResetConfirmSchema>): Promise<void> {
  const db = await getDb();
  const passwordHash = await hashPassword(input.password);
  await db.transaction(async (tx) => {
    const [reset] = await tx
      .select()
      .from(passwordResets)
      .where(eq(passwordResets.tokenHash, sha256Hex(input.token)))
      .for("update");
    if (!reset) throw new ApiError("reset_token_invalid", "This reset link is not valid.", "token");
    if (reset.usedAt) throw new ApiError("reset_token_used", "This reset link has already been used.", "token");
    if (reset.expiresAt.getTime() <= Date.now())
      throw new ApiError("reset_token_expired", "This reset link has expired; ask for a new one.", "token");
    const now = new Date();
    // Using one link spends every other open link of the account too.
    await tx
      .update(passwordResets)
      .set({ usedAt: now })
      .where(and(eq(passwordResets.userId, reset.userId), isNull(passwordResets.usedAt)));
    const [user] = await tx
      .update(users)
      // A new password signs out every earlier session (common practice after a reset).
      .set({ passwordHash, emailVerified: now, sessionsRevokedAt: now })
      .where(eq(users.id, reset.userId))
      .returning();
    // And ends every session row of the account (a new password means nobody else stays signed in).
    await endUserSessions(user.id, { db: tx });
    // Proving control of the mailbox lifts a lock on the account.
    await recordAttempt(tx, [accountKey(user.email)], true, now);
  });
}

export async function findUserById(id: string): Promise<User | undefined> {
  const db = await getDb();
  const [user] = await db.select().from(users).where(eq(users.id, id));
  return user;
}
