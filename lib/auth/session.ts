import "server-only";
import { and, eq, isNull } from "drizzle-orm";
import { decode } from "next-auth/jwt";
import { getDb } from "@/db/client";
import { users, userSessions, type User } from "@/db/schema";
import { getAuthSecret, usesSecureCookies } from "./config";

export function parseCookieHeader(header: string | null | undefined): Record<string, string> {
  // No prototype: a cookie named "constructor" or "__proto__" is just a cookie.
  const cookies: Record<string, string> = Object.create(null) as Record<string, string>;
  if (!header) return cookies;
  for (const part of header.split(";")) {
    const eqAt = part.indexOf("=");
    if (eqAt < 0) continue;
    const name = part.slice(0, eqAt).trim();
    if (!name || name in cookies) continue;
    const raw = part.slice(eqAt + 1).trim().replace(/^"(.*)"$/, "$1");
    try {
      cookies[name] = decodeURIComponent(raw);
    } catch {
      cookies[name] = raw;
    }
  }
  return cookies;
}

export function sessionCookieName(): string {
  return usesSecureCookies() ? "__Secure-next-auth.session-token" : "next-auth.session-token";
}

/** next-auth splits a large session cookie into `name.0`, `name.1`, …; join them back. */
function sessionCookieValue(cookies: Record<string, string>): string | undefined {
  const name = sessionCookieName();
  if (cookies[name]) return cookies[name];
  const chunks = Object.keys(cookies)
    .filter((k) => k.startsWith(`${name}.`) && /^\d+$/.test(k.slice(name.length + 1)))
    .sort((a, b) => Number(a.slice(name.length + 1)) - Number(b.slice(name.length + 1)));
  return chunks.length ? chunks.map((k) => cookies[k]).join("") : undefined;
}

/** Whether a Cookie header carries a session cookie at all (valid or not). */
export function hasSessionCookie(cookieHeader: string | null | undefined): boolean {
  return sessionCookieValue(parseCookieHeader(cookieHeader)) !== undefined;
}

/**
 * JWT `iat` has whole seconds: a session issued in the same second as the revocation counts as
 * after it (the sign-in that follows a reset or a first magic link happens in that same request).
 */
function issuedAfterRevocation(issuedAtS: number | undefined, revokedAt: Date): boolean {
  return issuedAtS !== undefined && issuedAtS >= Math.floor(revokedAt.getTime() / 1000);
}

/** The session id (`sid`) and user of a valid session cookie, before any database check. */
export async function decodeSessionCookie(cookieHeader: string | null | undefined): Promise<{ userId: string; sessionId: string; issuedAtS?: number } | null> {
  const value = sessionCookieValue(parseCookieHeader(cookieHeader));
  if (!value) return null;
  try {
    const token = await decode({ token: value, secret: getAuthSecret() });
    const userId = typeof token?.id === "string" ? token.id : token?.sub;
    const sessionId = typeof token?.sid === "string" ? token.sid : undefined;
    // A cookie without a session id predates server-side sessions and cannot be revoked: not accepted.
    if (!userId || !sessionId) return null;
    return { userId, sessionId, issuedAtS: typeof token?.iat === "number" ? token.iat : undefined };
  } catch {
    return null;
  }
}

/**
 * The signed-in user from a Cookie header, read fresh from the database (so a deleted user or a
 * revoked admin flag takes effect at once), or null when there is no valid session: the cookie's
 * session row must exist, belong to the user and not be revoked.
 */
export async function userFromCookieHeader(cookieHeader: string | null | undefined): Promise<User | null> {
  const decoded = await decodeSessionCookie(cookieHeader);
  if (!decoded) return null;
  const db = await getDb();
  const [row] = await db
    .select({ user: users })
    .from(userSessions)
    .innerJoin(users, eq(users.id, userSessions.userId))
    .where(and(eq(userSessions.id, decoded.sessionId), eq(userSessions.userId, decoded.userId), isNull(userSessions.revokedAt)));
  if (!row) return null;
  const { user } = row;
  if (user.sessionsRevokedAt && !issuedAfterRevocation(decoded.issuedAtS, user.sessionsRevokedAt)) return null;
  return user;
}
