/**
 * Every named access policy, in one place. Route handlers wrap themselves with `withAuth(POLICY, …)`,
 * the OpenAPI registry (lib/api/openapi/operations.ts) states the same constant for each operation,
 * and tests/integration/authorization-matrix.test.ts checks every route against it.
 */
import "server-only";
import type { RoutePolicy, StudioRoleRequirement } from "./guard";

/** Anyone; no actor needed (sign-in, signup, health, the OpenAPI document, Stripe's webhook). */
export const PUBLIC = { access: "public" } as const satisfies RoutePolicy;

/** A signed-in person (session cookie); API tokens are refused. */
export const SIGNED_IN = { access: "user" } as const satisfies RoutePolicy;

/** A signed-in platform admin; API tokens are refused. */
export const PLATFORM_ADMIN = { access: "admin" } as const satisfies RoutePolicy;

/** Reading a studio's work (sweeps, catalogues, snapshots): any member, and API tokens with the read (or write) scope. */
export const MEMBERS_READ = { access: "studio", roles: "member", token: "read" } as const satisfies RoutePolicy;

/** Quoting, submitting, cancelling, re-running, uploading: engineers and owners, and write tokens (finance gets 403). */
export const ENGINEERS_WRITE = { access: "studio", roles: ["owner", "engineer"], token: "write" } as const satisfies RoutePolicy;

/** Studio management that only owners do and API tokens never do (members, invites, tokens, webhooks). */
export const OWNERS_ONLY = { access: "studio", roles: ["owner"], token: "never" } as const satisfies RoutePolicy;

/** Money: owners and finance people buy packs and read balances, ledgers and invoices; engineers and API tokens do not. */
export const BILLING_PEOPLE = { access: "studio", roles: ["owner", "finance"], token: "never" } as const satisfies RoutePolicy;

/** Reading the money records (ledger, invoices): owners and finance, and API tokens with the read (or write) scope for bookkeeping tools. */
export const BILLING_READERS = { access: "studio", roles: ["owner", "finance"], token: "read" } as const satisfies RoutePolicy;

/** A studio's pages: people only (a page is never opened with an API token), with the roles the page needs. */
export function studioPagePolicy(roles: StudioRoleRequirement = "member") {
  return { access: "studio", roles, token: "never" } as const satisfies RoutePolicy;
}
