/**
 * Whether the contract suite may call Stripe's own test mode: only with a test-mode secret key
 * (sk_test_…) and never in CI. Anything else is a skip with the reason, printed by the suite.
 */
export function stripeTestMode(env: Record<string, string | undefined>): { key: string } | { skip: string } {
  if (env.CI) return { skip: "CI is set; the contract suite never calls Stripe from CI" };
  const key = env.STRIPE_SECRET_KEY;
  if (!key) return { skip: "STRIPE_SECRET_KEY is not set; set a test-mode key (sk_test_…) to run it against Stripe" };
  if (!key.startsWith("sk_test_")) return { skip: "STRIPE_SECRET_KEY is not a test-mode key (sk_test_…); the suite never runs in live mode" };
  return { key };
}
