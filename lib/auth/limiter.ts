import "server-only";
import { and, asc, desc, eq, gt, lt } from "drizzle-orm";
import type { DbOrTx } from "@/db/client";
import { loginAttempts } from "@/db/schema";

/** 5 failures within 15 minutes lock the key for 15 minutes (common practice for interactive sign-in). */
export const LOGIN_LIMIT = { maxFailures: 5, windowMs: 15 * 60_000, lockMs: 15 * 60_000 } as const;
/**
 * A network range (IPv4 /24, IPv6 /64: what one customer line or host usually holds, common
 * practice) gets more failures before it locks, since several people may share it.
 */
export const RANGE_LOGIN_LIMIT = { maxFailures: 25, windowMs: 15 * 60_000, lockMs: 15 * 60_000 } as const;

export const accountKey = (email: string) => `account:${email.toLowerCase()}`;
export const addressKey = (address: string) => `address:${address}`;
export const rangeKey = (address: string) => `range:${addressRange(address)}`;

/**
 * The header our own server stamps with the TCP peer's address on every request (overwriting any
 * copy a client sent); see lib/ops/peer-address.ts. Read only when that stamp is installed.
 */
export const PEER_HEADER = "x-kickdrift-peer";
const PEER_STAMP_FLAG = Symbol.for("kickdrift.peerStampInstalled");

export function peerStampInstalled(): boolean {
  return (globalThis as Record<symbol, unknown>)[PEER_STAMP_FLAG] === true;
}
export function markPeerStampInstalled(): void {
  (globalThis as Record<symbol, unknown>)[PEER_STAMP_FLAG] = true;
}

/**
 * How many reverse proxies in front of the app append to X-Forwarded-For and are trusted to tell
 * the truth: KICKDRIFT_TRUSTED_PROXY_HOPS, 0 (none) by default. With 0, X-Forwarded-For is
 * ignored and the client is the TCP peer; with N, the client is the N-th address from the right
 * of the chain (X-Forwarded-For entries, then the peer). Entries left of that are the client's
 * own claims and are never used.
 */
export function trustedProxyHops(): number {
  const raw = process.env.KICKDRIFT_TRUSTED_PROXY_HOPS;
  if (raw === undefined || raw.trim() === "") return 0;
  const hops = Number(raw);
  if (!Number.isInteger(hops) || hops < 0 || hops > 10)
    throw new Error(`KICKDRIFT_TRUSTED_PROXY_HOPS must be a whole number from 0 to 10, got "${raw}".`);
  return hops;
}

/** The client address: counted `hops` trusted proxies back from our TCP peer (see trustedProxyHops). */
export function clientAddress(headers: Headers | Record<string, string | string[] | undefined>, hops = trustedProxyHops()): string {
  const get = (name: string): string | undefined => {
    if (headers instanceof Headers) return headers.get(name) ?? undefined;
    const v = headers[name];
    return Array.isArray(v) ? v.join(", ") : v;
  };
  const chain = (get("x-forwarded-for") ?? "")
    .split(",")
    .map((hop) => hop.trim())
    .filter((hop) => hop !== "");
  const peer = peerStampInstalled() ? get(PEER_HEADER)?.trim() : undefined;
  // Without our server's stamp (a handler called in-process, as tests do), the last hop stands in for the peer.
  if (peer) chain.push(peer);
  if (chain.length === 0) return "unknown";
  const at = Math.max(0, chain.length - 1 - hops);
  return normaliseAddress(chain[at]).replaceAll("\u0000", "");
}

function normaliseAddress(address: string): string {
  const mapped = /^::ffff:(\d+\.\d+\.\d+\.\d+)$/i.exec(address);
  return (mapped ? mapped[1] : address).toLowerCase().slice(0, 100);
}

/** The /24 of an IPv4 address or the /64 of an IPv6 address; anything else stands for itself. */
export function addressRange(address: string): string {
  const v4 = /^(\d+)\.(\d+)\.(\d+)\.(\d+)$/.exec(address);
  if (v4) return `${v4[1]}.${v4[2]}.${v4[3]}.0/24`;
  if (address.includes(":")) {
    const [head, tail = ""] = address.split("::");
    const left = head ? head.split(":") : [];
    const right = address.includes("::") && tail ? tail.split(":") : [];
    const groups = address.includes("::") ? [...left, ...Array(Math.max(0, 8 - left.length - right.length)).fill("0"), ...right] : left;
    if (groups.length === 8 && groups.every((g) => /^[0-9a-f]{1,4}$/i.test(g)))
      return `${groups.slice(0, 4).map((g) => parseInt(g, 16).toString(16)).join(":")}::/64`;
  }
  return address;
}

/**
 * Whether the key is locked at `now`: some run of `maxFailures` failures (since the key's last
 * success) fell within `windowMs`, and the failure completing it was less than `lockMs` ago.
 */
export async function isLocked(db: DbOrTx, key: string, now = new Date(), limit: { maxFailures: number; windowMs: number; lockMs: number } = LOGIN_LIMIT): Promise<boolean> {
  const horizon = new Date(now.getTime() - limit.windowMs - limit.lockMs);
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
  const n = limit.maxFailures;
  for (let i = n - 1; i < failures.length; i++) {
    const completing = failures[i].at.getTime();
    const first = failures[i - n + 1].at.getTime();
    if (completing - first <= limit.windowMs && completing + limit.lockMs > now.getTime()) return true;
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
