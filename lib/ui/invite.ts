import { STUDIO_ROLES, type PublicInvite, type StudioRole } from "@/lib/ui/types";

/**
 * Reads the public invite answer of `GET /api/v1/invites/{token}`. The contract names the facts
 * (studio name, role, e-mail, expired?) but not the nesting, so accept `{ invite: {...} }` or a flat body,
 * with the studio either as `studioName` or `studio.name`.
 */
export function readPublicInvite(body: unknown): PublicInvite {
  const root = asRecord(body);
  const invite = asRecord(root.invite ?? root);
  const studio = asRecord(invite.studio ?? root.studio);
  const studioName = firstString(invite.studioName, studio.name, root.studioName);
  const role = firstString(invite.role, root.role);
  const email = firstString(invite.email, root.email);
  if (!studioName || !role || !email || !STUDIO_ROLES.includes(role as StudioRole)) {
    throw new Error("The invitation could not be read.");
  }
  const expired = invite.expired === true || root.expired === true;
  const accepted = invite.accepted === true || root.accepted === true || Boolean(firstString(invite.acceptedAt, root.acceptedAt));
  return { studioName, role: role as StudioRole, email, expired, accepted };
}

/** The studio joined, from the accept answer (`{ studio: { id } }`, `{ membership: { studioId } }` or `{ studioId }`). */
export function readAcceptedStudioId(body: unknown): string | null {
  const root = asRecord(body);
  const studio = asRecord(root.studio);
  const membership = asRecord(root.membership);
  return firstString(studio.id, membership.studioId, root.studioId) ?? null;
}

function asRecord(value: unknown): Record<string, unknown> {
  return value && typeof value === "object" ? (value as Record<string, unknown>) : {};
}

function firstString(...values: unknown[]): string | undefined {
  for (const value of values) if (typeof value === "string" && value.length > 0) return value;
  return undefined;
}
