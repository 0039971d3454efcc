import "server-only";
import { and, eq, isNull, ne } from "drizzle-orm";
import { getDb, type DbOrTx } from "@/db/client";
import { newId } from "@/db/ids";
import { userSessions } from "@/db/schema";

/** Opens a session row for a sign-in; its id goes into the session JWT as `sid`. */
export async function openSession(userId: string, db?: DbOrTx): Promise<string> {
  const id = newId("ses");
  await (db ?? (await getDb())).insert(userSessions).values({ id, userId });
  return id;
}

/** Ends one session (sign-out). Ending an unknown or already ended session changes nothing. */
export async function endSession(sessionId: string, db?: DbOrTx): Promise<void> {
  await (db ?? (await getDb()))
    .update(userSessions)
    .set({ revokedAt: new Date() })
    .where(and(eq(userSessions.id, sessionId), isNull(userSessions.revokedAt)));
}

/** Ends every session of a user ("sign out everywhere", a new password, a lost role), except `keep` if given. */
export async function endUserSessions(userId: string, options: { keep?: string; db?: DbOrTx } = {}): Promise<number> {
  const db = options.db ?? (await getDb());
  const conditions = [eq(userSessions.userId, userId), isNull(userSessions.revokedAt)];
  if (options.keep) conditions.push(ne(userSessions.id, options.keep));
  const ended = await db.update(userSessions).set({ revokedAt: new Date() }).where(and(...conditions)).returning({ id: userSessions.id });
  return ended.length;
}
