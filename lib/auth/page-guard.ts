import "server-only";
import { cookies } from "next/headers";
import { forbidden, notFound, redirect } from "next/navigation";
import type { Studio, StudioRole } from "@/db/schema";
import { ApiError } from "@/lib/errors";
import { publicUser, type PublicUser } from "./accounts";
import { authorize, type StudioRoleRequirement } from "./guard";
import { studioPagePolicy } from "./policies";
import { userFromCookieHeader } from "./session";

/**
 * Server-side guards for pages (server components), deciding with the same `authorize` policy as
 * the API: not signed in → redirect to /signin?callbackUrl=…; another studio → notFound();
 * a wrong role → forbidden(), which answers HTTP 403 with app/forbidden.tsx.
 */
async function cookieHeader(): Promise<string> {
  const store = await cookies();
  return store
    .getAll()
    .map((c) => `${c.name}=${encodeURIComponent(c.value)}`)
    .join("; ");
}

function signInUrl(callbackUrl: string): string {
  return `/signin?callbackUrl=${encodeURIComponent(callbackUrl)}`;
}

/** The signed-in user, or null (for headers and nav that render for everyone). */
export async function getPageUser(): Promise<PublicUser | null> {
  const user = await userFromCookieHeader(await cookieHeader());
  return user ? publicUser(user) : null;
}

/** The signed-in user; redirects to sign-in otherwise. */
export async function requireUser(callbackUrl: string): Promise<PublicUser> {
  const user = await getPageUser();
  if (!user) redirect(signInUrl(callbackUrl));
  return user;
}

/** The signed-in platform admin; other users get the 403 page. */
export async function requireAdmin(callbackUrl: string): Promise<PublicUser> {
  const user = await requireUser(callbackUrl);
  if (!user.isAdmin) forbidden();
  return user;
}

export interface StudioPageView {
  id: string;
  name: string;
  status: Studio["status"];
  createdAt: string;
}

export interface StudioPageAccess {
  user: PublicUser;
  studio: StudioPageView;
  role: StudioRole;
}

/**
 * For `/studios/[studioId]/…` pages. `roles` defaults to any member; e.g. `{ roles: ["owner"] }`
 * for the members and tokens management pages.
 */
export async function requireStudio(
  studioId: string,
  options: { callbackUrl: string; roles?: StudioRoleRequirement },
): Promise<StudioPageAccess> {
  const user = await userFromCookieHeader(await cookieHeader());
  if (!user) redirect(signInUrl(options.callbackUrl));
  const actor = { kind: "user" as const, user };
  // First as any member: a non-member must get 404 whatever the page needs.
  let membership;
  try {
    membership = await authorize(studioPagePolicy(), actor, studioId);
  } catch (error) {
    if (error instanceof ApiError && error.status === 404) notFound();
    throw error;
  }
  const studio = membership.studio!;
  const role = membership.role!;
  const view: StudioPageView = { id: studio.id, name: studio.name, status: studio.status, createdAt: studio.createdAt.toISOString() };
  const requirement = options.roles ?? "member";
  try {
    await authorize(studioPagePolicy(requirement), actor, studioId);
  } catch (error) {
    if (error instanceof ApiError && error.status === 403) forbidden();
    throw error;
  }
  return { user: publicUser(user), studio: view, role };
}
