import "server-only";
import { and, desc, eq, isNull } from "drizzle-orm";
import { z } from "@/lib/zod";
import { getDb } from "@/db/client";
import { newId, newSecret, sha256Hex } from "@/db/ids";
import { invites, memberships, studios, users, type Invite, type StudioRole, type User } from "@/db/schema";
import { emailSchema } from "@/lib/auth/password";
import { appBaseUrl } from "@/lib/auth/config";
import { writeAudit } from "@/lib/audit/audit";
import { ApiError } from "@/lib/errors";
import { inviteMail } from "@/lib/mail/templates";
import { trySendMail } from "@/lib/mail/send";
import { roleSchema } from "./members";

export const INVITE_TTL_MS = 7 * 24 * 3600_000;

export const createInviteSchema = z.strictObject({ email: emailSchema, role: roleSchema });

export interface InviteView {
  id: string;
  email: string;
  role: StudioRole;
  expiresAt: string;
  createdAt: string;
  expired: boolean;
}

function inviteView(invite: Invite, now = Date.now()): InviteView {
  return {
    id: invite.id,
    email: invite.email,
    role: invite.role,
    expiresAt: invite.expiresAt.toISOString(),
    createdAt: invite.createdAt.toISOString(),
    expired: invite.expiresAt.getTime() <= now,
  };
}

/** Pending invites: not yet accepted (expired ones are listed with `expired: true` so owners can resend). */
export async function listInvites(studioId: string): Promise<InviteView[]> {
  const db = await getDb();
  const rows = await db
    .select()
    .from(invites)
    .where(and(eq(invites.studioId, studioId), isNull(invites.acceptedAt)))
    .orderBy(desc(invites.createdAt));
  return rows.map((r) => inviteView(r));
}

/**
 * Invites an e-mail with a role and mails the link. A newer invite for the same address replaces
 * any pending one, so only the latest link works.
 */
export async function createInvite(
  studioId: string,
  inviter: User,
  input: z.infer<typeof createInviteSchema>,
): Promise<{ invite: InviteView; mailSent: boolean }> {
  const db = await getDb();
  const secret = newSecret();
  const { invite, studioName } = await db.transaction(async (tx) => {
    const [studio] = await tx.select().from(studios).where(eq(studios.id, studioId));
    if (!studio) throw new ApiError("not_found", "Studio not found.");
    const [member] = await tx
      .select({ userId: users.id })
      .from(memberships)
      .innerJoin(users, eq(users.id, memberships.userId))
      .where(and(eq(memberships.studioId, studioId), eq(users.email, input.email)));
    if (member) throw new ApiError("already_member", `${input.email} is already a member of this studio.`, "email");
    await tx.delete(invites).where(and(eq(invites.studioId, studioId), eq(invites.email, input.email), isNull(invites.acceptedAt)));
    const [row] = await tx
      .insert(invites)
      .values({
        id: newId("inv"),
        studioId,
        email: input.email,
        role: input.role,
        tokenHash: sha256Hex(secret),
        invitedByUserId: inviter.id,
        expiresAt: new Date(Date.now() + INVITE_TTL_MS),
      })
      .returning();
    // The secret never enters the audit log; the invite's id, address and role do.
    await writeAudit(tx, { actor: inviter, studioId, action: "invite.create", subjectType: "invite", subjectId: row.id, before: null, after: { email: row.email, role: row.role, expiresAt: row.expiresAt.toISOString() } });
    return { invite: row, studioName: studio.name };
  });
  const mailSent = await trySendMail(
    invite.email,
    inviteMail({
      url: `${appBaseUrl()}/invite/${encodeURIComponent(secret)}`,
      studioName,
      role: invite.role,
      inviterName: inviter.name || inviter.email,
      expiresAt: invite.expiresAt,
    }),
  );
  return { invite: inviteView(invite), mailSent };
}

export async function deleteInvite(studioId: string, inviteId: string, actor: Pick<User, "id" | "email"> | null = null): Promise<void> {
  const db = await getDb();
  await db.transaction(async (tx) => {
    const deleted = await tx
      .delete(invites)
      .where(and(eq(invites.id, inviteId), eq(invites.studioId, studioId), isNull(invites.acceptedAt)))
      .returning({ id: invites.id, email: invites.email, role: invites.role });
    if (deleted.length === 0) throw new ApiError("not_found", "Invite not found.");
    await writeAudit(tx, { actor, studioId, action: "invite.withdraw", subjectType: "invite", subjectId: inviteId, before: { email: deleted[0].email, role: deleted[0].role }, after: null });
  });
}

export interface PublicInviteView {
  studio: { id: string; name: string };
  email: string;
  role: StudioRole;
  expiresAt: string;
  expired: boolean;
  accepted: boolean;
}

async function findInviteBySecret(secret: string) {
  const db = await getDb();
  const [row] = await db
    .select({ invite: invites, studio: studios })
    .from(invites)
    .innerJoin(studios, eq(studios.id, invites.studioId))
    .where(eq(invites.tokenHash, sha256Hex(secret)));
  return row;
}

/** What the invite page shows before accepting; anyone holding the link may see it. */
export async function describeInvite(secret: string): Promise<PublicInviteView> {
  const row = await findInviteBySecret(secret);
  if (!row) throw new ApiError("not_found", "Invite not found.");
  return {
    studio: { id: row.studio.id, name: row.studio.name },
    email: row.invite.email,
    role: row.invite.role,
    expiresAt: row.invite.expiresAt.toISOString(),
    expired: row.invite.expiresAt.getTime() <= Date.now(),
    accepted: row.invite.acceptedAt !== null,
  };
}

/** Accepts as `user`, who must be signed in with the invited e-mail. Single use; 410 once used or expired. */
export async function acceptInvite(secret: string, user: User): Promise<{ id: string; name: string; role: StudioRole }> {
  const db = await getDb();
  return db.transaction(async (tx) => {
    const [row] = await tx
      .select({ invite: invites, studio: studios })
      .from(invites)
      .innerJoin(studios, eq(studios.id, invites.studioId))
      .where(eq(invites.tokenHash, sha256Hex(secret)))
      .for("update", { of: invites });
    if (!row) throw new ApiError("not_found", "Invite not found.");
    const { invite, studio } = row;
    if (invite.acceptedAt) throw new ApiError("invite_used", "This invite has already been used.");
    if (invite.expiresAt.getTime() <= Date.now())
      throw new ApiError("invite_expired", "This invite has expired; ask an owner of the studio for a new one.");
    if (invite.email !== user.email.toLowerCase())
      throw new ApiError("invite_email_mismatch", `This invite is for ${invite.email}; sign in with that address to accept it.`);
    const now = new Date();
    await tx.update(invites).set({ acceptedAt: now, acceptedByUserId: user.id }).where(eq(invites.id, invite.id));
    const [existing] = await tx
      .select()
      .from(memberships)
      .where(and(eq(memberships.studioId, studio.id), eq(memberships.userId, user.id)));
    // An existing member keeps their current role; the invite never demotes anyone.
    if (existing) return { id: studio.id, name: studio.name, role: existing.role };
    await tx.insert(memberships).values({ studioId: studio.id, userId: user.id, role: invite.role, joinedAt: now });
    await writeAudit(tx, { actor: user, studioId: studio.id, action: "invite.accept", subjectType: "invite", subjectId: invite.id, before: null, after: { email: invite.email, role: invite.role } });
    // Following an invite link from the mailbox proves the address.
    await tx.update(users).set({ emailVerified: now }).where(and(eq(users.id, user.id), isNull(users.emailVerified)));
    return { id: studio.id, name: studio.name, role: invite.role };
  });
}
