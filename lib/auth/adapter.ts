import "server-only";
import { and, eq } from "drizzle-orm";
import type { Adapter, AdapterUser, VerificationToken } from "next-auth/adapters";
import { getDb } from "@/db/client";
import { newId } from "@/db/ids";
import { users, verificationTokens, type User } from "@/db/schema";

function toAdapterUser(user: User): AdapterUser {
  return { id: user.id, email: user.email, name: user.name, emailVerified: user.emailVerified };
}

/**
 * The part of next-auth 4's Adapter that the e-mail (magic link) flow uses with JWT sessions,
 * against our own tables. Accounts (OAuth) are not used: lookups by account find nothing.
 */
export function kickdriftAdapter(): Adapter {
  return {
    async createUser(data: Omit<AdapterUser, "id">) {
      const db = await getDb();
      const email = data.email.toLowerCase();
      // An invitee signing in by link for the first time: name them after their mailbox until they choose a name.
      const name = data.name?.trim() || email.split("@")[0];
      const [user] = await db
        .insert(users)
        .values({ id: newId("usr"), email, name, emailVerified: data.emailVerified ?? null })
        .onConflictDoNothing({ target: users.email })
        .returning();
      if (user) return toAdapterUser(user);
      const [existing] = await db.select().from(users).where(eq(users.email, email));
      return toAdapterUser(existing);
    },
    async getUser(id: string) {
      const db = await getDb();
      const [user] = await db.select().from(users).where(eq(users.id, id));
      return user ? toAdapterUser(user) : null;
    },
    async getUserByEmail(email: string) {
      if (email.includes("\u0000")) return null;
      const db = await getDb();
      const [user] = await db.select().from(users).where(eq(users.email, email.toLowerCase()));
      return user ? toAdapterUser(user) : null;
    },
    async getUserByAccount() {
      return null;
    },
    async updateUser(data: Partial<AdapterUser> & Pick<AdapterUser, "id">) {
      const db = await getDb();
      const patch: Partial<typeof users.$inferInsert> = {};
      if (data.emailVerified !== undefined) {
        patch.emailVerified = data.emailVerified;
        const [current] = await db.select().from(users).where(eq(users.id, data.id));
        // The mailbox owner proves the address for the first time. If the account was registered
        // with a password by someone who never proved it, that password and its sessions may be
        // someone else's: drop both, so a pre-registered account cannot be used to watch the owner.
        if (data.emailVerified && current && !current.emailVerified && current.passwordHash) {
          patch.passwordHash = null;
          patch.sessionsRevokedAt = new Date();
        }
      }
      if (typeof data.name === "string" && data.name.trim()) patch.name = data.name.trim();
      const [user] =
        Object.keys(patch).length > 0
          ? await db.update(users).set(patch).where(eq(users.id, data.id)).returning()
          : await db.select().from(users).where(eq(users.id, data.id));
      return toAdapterUser(user);
    },
    async linkAccount() {
      return undefined;
    },
    async createVerificationToken(token: VerificationToken) {
      // next-auth turns a thrown error here into its generic "EmailSignin" answer.
      if (token.identifier.includes("\u0000") || token.identifier.length > 254) throw new Error("Not a valid e-mail address.");
      const db = await getDb();
      await db.insert(verificationTokens).values({ identifier: token.identifier, token: token.token, expires: token.expires });
      return token;
    },
    async useVerificationToken(params: { identifier: string; token: string }) {
      const db = await getDb();
      // Deleting while reading makes each link single use, even under concurrent clicks.
      const [row] = await db
        .delete(verificationTokens)
        .where(and(eq(verificationTokens.identifier, params.identifier), eq(verificationTokens.token, params.token)))
        .returning();
      return row ?? null;
    },
  };
}
