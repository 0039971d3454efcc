import { and, asc, desc, eq, gt, lt } from "drizzle-orm";
import type { DbOrTx } from "@/db/client";
import { loginAttempts } from "@/db/schema";

/** 5 failures within 15 minutes lock the key for 15 minutes (common practice for interactive sign-in). */
export const LOGIN_LIMIT = { maxFailures: 5, windowMs: 15 * 60_000, lockMs: 15 * 60_000 } as const;

export const accountKey = (email: string) => `account:${email.toLowerCase()}`;
export const addressKey = (address: string) => `address:${address}`;

/** The client address as the proxy in front of us reports it (first hop of x-forwarded-for). */
export function clientAddress(headers: Headers | Record<string, string | string[] | undefined>): string {
  const get = (name: string): string | undefined => {
    if (headers instanceof Headers) return headers.get(name) ?? undefined;
    const v = headers[name];
    return Array.isArray(v) ? v[0] : v;
  };
  const forwarded = get("x-forwarded-for")?.split(",")[0]?.trim();
  return forwarded || get("x-real-ip")?.trim() || "unknown";
}

/**
 * Whether the key is locked at `now`: some run of `maxFailures` failures (since the key's last
 * success) fell within `windowMs`, and the failure completing it was less than `lockMs` ago.
 */
export async function isLocked(db: DbOrTx, key: string, now = new Date()): Promise<boolean> {
  const horizon = new Date(now.getTime() - LOGIN_LIMIT.windowMs - LOGIN_LIMIT.lockMs);
  const [lastSuccess] = await db
    .select({ at: loginAttempts.createdAt })
    .from(loginAttempts)
    .where(and(eq(loginAttempts.key, key), eq(loginAttempts.succeeded, true), gt(loginAttempts.createdAt, horizon)))
    .orderBy(desc(loginAttempts.createdAt))
    .limit(1);
  const since = lastSuccess && lastSuccess.at > horizon ? lastSuccess.at : horizon;
  const failures = await db
    .select({ at: loginAttempts.createdAt })
    .from(loginAttempts)
    .where(and(eq(loginAttempts.key, key), eq(loginAttempts.succeeded, false), gt(loginAttempts.createdAt, since)))
    .orderBy(asc(loginAttempts.createdAt))
    .limit(200);
  const n = LOGIN_LIMIT.maxFailures;
  for (let i = n - 1; i < failures.length; i++) {
    const completing = failures[i].at.getTime();
    const first = failures[i - n + 1].at.getTime();
    if (completing - first <= LOGIN_LIMIT.windowMs && completing + LOGIN_LIMIT.lockMs > now.getTime()) return true;
  }
  return false;
}

export async function recordAttempt(db: DbOrTx, keys: string[], succeeded: boolean, now = new Date()): Promise<void> {
  if (keys.length === 0) return;
  await db.insert(loginAttempts).values(keys.map((key) => ({ key, succeeded, createdAt: now })));
  // Rows older than a day can no longer affect a decision.
  const dayAgo = new Date(now.getTime() - 24 * 3600_000);
  for (const key of keys) {
    await db.delete(loginAttempts).where(and(eq(loginAttempts.key, key), lt(loginAttempts.createdAt, dayAgo)));
  }
}
