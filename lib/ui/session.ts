import type { Session } from "next-auth";

/** The fields the contract puts on session.user, read without depending on a module augmentation. */
export type SessionUser = { id?: string; email?: string | null; name?: string | null; isAdmin?: boolean };

export function sessionUser(session: Session | null | undefined): SessionUser | null {
  return (session?.user as SessionUser | undefined) ?? null;
}
