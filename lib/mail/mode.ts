import "server-only";

/**
 * Which local fakes this process may run, and which it does. Free of imports, so the layout and
 * pages can ask without bundling nodemailer or the Stripe SDK.
 *
 * The local mail and Stripe fakes stand in for hosted services only on a demo instance
 * (KICKDRIFT_DEMO=1, `npm run demo`), in development (`next dev`) and in tests. A production start
 * (NODE_ENV=production without KICKDRIFT_DEMO=1) never falls back to them: without SMTP_URL or the
 * Stripe keys it refuses to start (productionStartProblem, checked by server/startup.ts).
 */
type Env = Readonly<Record<string, string | undefined>>;

/** KICKDRIFT_DEMO=1: a demo instance (seeded demo studio, fakes allowed, banner on every page). */
export function isDemoInstance(env: Env = process.env): boolean {
  return env.KICKDRIFT_DEMO === "1";
}

/** The fakes may stand in: a demo instance, development or tests; never a plain production start. */
export function fakesAllowed(env: Env = process.env): boolean {
  return isDemoInstance(env) || env.NODE_ENV !== "production";
}

/** The local mail fake (and with it the admin's /mail mailbox) is on when no SMTP_URL is set and fakes are allowed. */
export function isMailFakeEnabled(env: Env = process.env): boolean {
  return !env.SMTP_URL && fakesAllowed(env);
}

/** The local Stripe fake serves payments when no STRIPE_SECRET_KEY is set and fakes are allowed. */
export function isStripeFakeEnabled(env: Env = process.env): boolean {
  return !env.STRIPE_SECRET_KEY && fakesAllowed(env);
}

/** The settings a production start lacks, in the order an operator would set them. */
export function missingProductionSettings(env: Env = process.env): string[] {
  if (fakesAllowed(env)) return [];
  const missing: string[] = [];
  if (!env.SMTP_URL) missing.push("SMTP_URL");
  if (!env.STRIPE_SECRET_KEY) missing.push("STRIPE_SECRET_KEY");
  if (!env.STRIPE_WEBHOOK_SECRET) missing.push("STRIPE_WEBHOOK_SECRET");
  return missing;
}

/** One line naming what a production start lacks, or null when it may start. */
export function productionStartProblem(env: Env = process.env): string | null {
  const missing = missingProductionSettings(env);
  if (missing.length === 0) return null;
  return (
    `[kickdrift] refusing to start: NODE_ENV=production needs ${missing.join(", ")} ` +
    `(the local mail and Stripe fakes run only on a demo instance, KICKDRIFT_DEMO=1, in development and in tests).`
  );
}

/** What the demo banner says is fake on this instance, or null when nothing is (no banner). */
export function demoBannerText(env: Env = process.env): string | null {
  const mail = isMailFakeEnabled(env);
  const payments = isStripeFakeEnabled(env);
  if (!mail && !payments && !isDemoInstance(env)) return null;
  const parts = [payments ? "payments are fake (test cards only)" : null, mail ? "mail is captured here, not delivered" : null].filter(Boolean);
  return parts.length > 0 ? `Demo instance: ${parts.join("; ")}.` : "Demo instance.";
}
