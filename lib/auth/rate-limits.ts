import "server-only";
import { RateLimiterMemory, RateLimiterRes } from "rate-limiter-flexible";
import { ApiError } from "@/lib/errors";

/**
 * Limits on requests that send mail or open a payment page, so nobody can use us to flood a
 * mailbox or the payment provider. Counted with rate-limiter-flexible's in-memory store, per
 * server process (one web process serves the app; a restart forgets the counts, which only
 * ever lets a few more through). Values are common practice for interactive account mail.
 */
export const RATE_LIMITS = {
  /** Sign-in links (magic links) to one address. */
  magicLinkPerEmail: { points: 5, durationS: 3600, what: "sign-in links for this address" },
  /** Sign-in links requested from one client address, whatever the e-mail. */
  magicLinkPerAddress: { points: 30, durationS: 3600, what: "sign-in links from your network address" },
  /** Password-reset requests for one address (the mail itself is also capped at 5 an hour per account). */
  resetPerEmail: { points: 5, durationS: 3600, what: "password resets for this address" },
  resetPerAddress: { points: 30, durationS: 3600, what: "password resets from your network address" },
  /** Sign-ups from one client address (each may mail the owner of an existing address). */
  signupPerAddress: { points: 20, durationS: 3600, what: "sign-ups from your network address" },
  signupPerEmail: { points: 5, durationS: 3600, what: "sign-ups for this address" },
  /** Invitations sent by one studio. */
  invitesPerStudio: { points: 50, durationS: 3600, what: "invitations from this studio" },
  /** Checkout sessions opened by one studio. */
  checkoutPerStudio: { points: 30, durationS: 3600, what: "checkout sessions for this studio" },
} as const;

export type RateLimitName = keyof typeof RATE_LIMITS;

const limiters = new Map<RateLimitName, RateLimiterMemory>();

function limiter(name: RateLimitName): RateLimiterMemory {
  let found = limiters.get(name);
  if (!found) {
    const { points, durationS } = RATE_LIMITS[name];
    found = new RateLimiterMemory({ keyPrefix: name, points, duration: durationS });
    limiters.set(name, found);
  }
  return found;
}

/**
 * Counts one request against the named limit for `key`; over the limit throws 429 naming the
 * limit and when to try again (`Retry-After`, seconds). `field` names the input the key came from.
 */
export async function consumeRateLimit(name: RateLimitName, key: string, field?: string): Promise<void> {
  try {
    await limiter(name).consume(key);
  } catch (error) {
    if (!(error instanceof RateLimiterRes)) throw error;
    const { points, durationS, what } = RATE_LIMITS[name];
    const retryS = Math.max(1, Math.ceil(error.msBeforeNext / 1000));
    throw new ApiError("rate_limited",
      `${field ? `${field}: ` : ""}too many ${what}: at most ${points} per ${durationS / 60} minutes; try again in ${Math.ceil(retryS / 60)} minute(s).`,
      field,
      undefined,
      { "retry-after": String(retryS) },
    );
  }
}

/** Tests: forget every count. */
export function resetRateLimits(): void {
  limiters.clear();
}
