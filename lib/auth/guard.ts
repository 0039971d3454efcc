import "server-only";
import { and, eq } from "drizzle-orm";
import { getDb } from "@/db/client";
import { memberships, studios, type ApiToken, type Studio, type StudioRole, type User } from "@/db/schema";
import { ApiError } from "@/lib/errors";
import { toErrorResponse } from "@/lib/api/respond";
import { authenticateApiToken } from "./api-tokens";
import { assertSameOriginWrite } from "./same-origin";
import { userFromCookieHeader } from "./session";

/**
 * The access policy of one route method. Every route handler is wrapped with `withAuth(policy, …)`,
 * and the wrapper attaches the policy to the exported handler (`GET.policy`) so tests can enumerate it.
 *
 * - public: anyone; no actor needed.
 * - user:   a signed-in person (session cookie). API tokens are refused (403 token_not_allowed).
 * - admin:  a signed-in platform admin. API tokens are refused.
 * - studio: the `studioId` route param, seen by a member whose role satisfies `roles`, or by an API
 *           token of that studio when `token` allows it ("read" needs read or write, "write" needs write;
 *           "never" refuses tokens). Anyone else gets the same 404 as a studio that does not exist.
 */
export type StudioRoleRequirement = "member" | readonly StudioRole[];
export type RoutePolicy =
  | { readonly access: "public" }
  | { readonly access: "user" }
  | { readonly access: "admin" }
  | { readonly access: "studio"; readonly roles: StudioRoleRequirement; readonly token: "read" | "write" | "never" };

export type Actor = { kind: "user"; user: User } | { kind: "token"; token: ApiToken };

type Params = Record<string, string | string[]>;

interface BaseContext<P extends Params> {
  req: Request;
  params: P;
}
export interface PublicContext<P extends Params> extends BaseContext<P> {
  actor: Actor | null;
}
export interface UserContext<P extends Params> extends BaseContext<P> {
  actor: Actor & { kind: "user" };
  user: User;
}
export interface StudioContext<P extends Params> extends BaseContext<P> {
  actor: Actor;
  /** The person acting, or null when an API token acts. */
  user: User | null;
  studio: Studio;
  /** The member's role, or null when an API token acts. */
  role: StudioRole | null;
}

export type ContextFor<Policy extends RoutePolicy, P extends Params> = Policy extends { access: "studio" }
  ? StudioContext<P>
  : Policy extends { access: "user" | "admin" }
    ? UserContext<P>
    : PublicContext<P>;

export type GuardedHandler<Policy extends RoutePolicy, P extends Params> = ((
  req: Request,
  context: { params: Promise<P> },
) => Promise<Response>) & { policy: Policy };

const unauthenticated = () => new ApiError("unauthenticated", "Sign in or present an API token.");
const studioNotFound = () => new ApiError("not_found", "Studio not found.");

/** Who is calling: an API token (Authorization: Bearer), else the session cookie, else nobody. */
export async function resolveActor(req: Request): Promise<Actor | null> {
  const authorization = req.headers.get("authorization");
  if (authorization !== null) {
    const match = /^Bearer\s+(\S+)$/i.exec(authorization.trim());
    const token = match ? await authenticateApiToken(match[1]) : null;
    if (!token)
      throw new ApiError("invalid_token", "The API token is unknown, malformed or revoked.", undefined, undefined, {
        "www-authenticate": 'Bearer error="invalid_token"',
      });
    return { kind: "token", token };
  }
  const user = await userFromCookieHeader(req.headers.get("cookie"));
  return user ? { kind: "user", user } : null;
}

export function roleSatisfies(role: StudioRole, requirement: StudioRoleRequirement): boolean {
  return requirement === "member" || requirement.includes(role);
}

function describeRoles(requirement: StudioRoleRequirement): string {
  return requirement === "member" ? "a member" : requirement.join(" or ");
}

/**
 * The policy decision, shared by route handlers and pages. Throws ApiError 401/403/404, or returns
 * the studio and role the handler may use.
 */
export async function authorize(
  policy: RoutePolicy,
  actor: Actor | null,
  studioId?: string,
): Promise<{ studio: Studio | null; role: StudioRole | null }> {
  if (policy.access === "public") return { studio: null, role: null };
  if (!actor) throw unauthenticated();
  if (policy.access === "user" || policy.access === "admin") {
    if (actor.kind === "token") throw new ApiError("token_not_allowed", "API tokens cannot use this route; sign in instead.");
    if (policy.access === "admin" && !actor.user.isAdmin) throw new ApiError("forbidden", "Only platform admins may do this.");
    return { studio: null, role: null };
  }
  if (!studioId) throw studioNotFound();
  const db = await getDb();
  if (actor.kind === "token") {
    // Scoped to the token's own studio: any other id looks exactly like one that does not exist.
    if (actor.token.studioId !== studioId) throw studioNotFound();
    const [studio] = await db.select().from(studios).where(eq(studios.id, studioId));
    if (!studio) throw studioNotFound();
    if (policy.token === "never")
      throw new ApiError("token_not_allowed", "API tokens cannot manage members, invites or tokens; sign in instead.");
    const scopes = actor.token.scopes;
    const allowed = policy.token === "read" ? scopes.includes("read") || scopes.includes("write") : scopes.includes("write");
    if (!allowed) throw new ApiError("insufficient_scope", `This route needs an API token with the "${policy.token}" scope.`);
    return { studio, role: null };
  }
  const [row] = await db
    .select({ studio: studios, role: memberships.role })
    .from(memberships)
    .innerJoin(studios, eq(studios.id, memberships.studioId))
    .where(and(eq(memberships.studioId, studioId), eq(memberships.userId, actor.user.id)));
  // Not a member (platform admins included): the same 404 as a studio that does not exist.
  if (!row) throw studioNotFound();
  if (!roleSatisfies(row.role, policy.roles))
    throw new ApiError("forbidden", `Only ${describeRoles(policy.roles)} of this studio may do this; you are ${row.role}.`);
  return { studio: row.studio, role: row.role };
}

/** Wraps a route handler with its policy: the handler runs only when the policy allows. */
export function withAuth<const Policy extends RoutePolicy, P extends Params = Record<string, string>>(
  policy: Policy,
  handler: (context: ContextFor<Policy, P>) => Promise<Response>,
): GuardedHandler<Policy, P> {
  const guarded = async (req: Request, context: { params: Promise<P> }): Promise<Response> => {
    try {
      const params = ((await context?.params) ?? {}) as P;
      // No stored id or token contains NUL (PostgreSQL text cannot): such a path names nothing.
      const values = Object.values(params).flat();
      if (values.some((v) => typeof v === "string" && v.includes("\u0000"))) throw new ApiError("not_found", "Not found.");
      assertSameOriginWrite(req);
      let actor: Actor | null;
      if (policy.access === "public") {
        // A public route does not fail because of a stale token; it just runs anonymously.
        actor = await resolveActor(req).catch(() => null);
      } else {
        actor = await resolveActor(req);
      }
      const studioId = typeof params.studioId === "string" ? params.studioId : undefined;
      const { studio, role } = await authorize(policy, actor, studioId);
      const user = actor?.kind === "user" ? actor.user : null;
      const full = { req, params, actor, user, studio, role };
      return await handler(full as unknown as ContextFor<Policy, P>);
    } catch (error) {
      return toErrorResponse(error);
    }
  };
  return Object.assign(guarded, { policy });
}
