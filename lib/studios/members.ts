import "server-only";
import { and, asc, eq } from "drizzle-orm";
import { z } from "@/lib/zod";
import { getDb, type DbOrTx } from "@/db/client";
import { memberships, STUDIO_ROLES, users, type StudioRole, type User } from "@/db/schema";
import { writeAudit } from "@/lib/audit/audit";
import { ApiError } from "@/lib/errors";
import { endUserSessions } from "@/lib/auth/user-sessions";

export const roleSchema = z.enum(STUDIO_ROLES, { error: `Role must be one of ${STUDIO_ROLES.join(", ")}.` });
export const changeRoleSchema = z.strictObject({ role: roleSchema });

/** A member as the API shows them; the OpenAPI document describes answers with it. */
export const memberViewSchema = z.strictObject({ userId: z.string(), email: z.string(), name: z.string(), role: roleSchema, joinedAt: z.iso.datetime() }).meta({ id: "Member" });
export type MemberView = z.infer<typeof memberViewSchema>;

export async function listMembers(studioId: string): Promise<MemberView[]> {
  const db = await getDb();
  const rows = await db
    .select({ userId: users.id, email: users.email, name: users.name, role: memberships.role, joinedAt: memberships.joinedAt })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.studioId, studioId))
    .orderBy(asc(memberships.joinedAt), asc(users.email));
  return rows.map((r) => ({ ...r, joinedAt: r.joinedAt.toISOString() }));
}

const lastOwner = (action: string) =>
  new ApiError("last_owner", `A studio needs at least one owner: make another member owner before you ${action} the last one.`);

/**
 * Locks the studio's membership rows, so two concurrent changes cannot both see "another owner
 * remains" and leave the studio without one.
 */
async function lockMembers(tx: DbOrTx, studioId: string) {
  return tx.select().from(memberships).where(eq(memberships.studioId, studioId)).for("update");
}

/** The person making a change, for the audit log. */
export type ChangeActor = Pick<User, "id" | "email"> | null;

export async function changeRole(studioId: string, userId: string, role: StudioRole, actor: ChangeActor = null): Promise<MemberView> {
  const db = await getDb();
  await db.transaction(async (tx) => {
    const rows = await lockMembers(tx, studioId);
    const target = rows.find((r) => r.userId === userId);
    if (!target) throw new ApiError("not_found", "Member not found.");
    if (target.role === role) return;
    const owners = rows.filter((r) => r.role === "owner").length;
    if (target.role === "owner" && owners <= 1) throw lastOwner("demote");
    await tx.update(memberships).set({ role }).where(and(eq(memberships.studioId, studioId), eq(memberships.userId, userId)));
    // Losing a role to someone else's decision ends the member's sessions: whatever a page or tab
    // still holds is signed out. Stepping down oneself keeps one's own sessions.
    if (actor?.id !== userId) await endUserSessions(userId, { db: tx });
    await writeAudit(tx, { actor, studioId, action: "member.role_change", subjectType: "user", subjectId: userId, before: { role: target.role }, after: { role } });
  });
  const member = (await listMembers(studioId)).find((m) => m.userId === userId);
  if (!member) throw new ApiError("not_found", "Member not found.");
  return member;
}

export async function removeMember(studioId: string, userId: string, actor: ChangeActor = null): Promise<void> {
  const db = await getDb();
  await db.transaction(async (tx) => {
    const rows = await lockMembers(tx, studioId);
    const target = rows.find((r) => r.userId === userId);
    if (!target) throw new ApiError("not_found", "Member not found.");
    const owners = rows.filter((r) => r.role === "owner").length;
    if (target.role === "owner" && owners <= 1) throw lastOwner("remove");
    await tx.delete(memberships).where(and(eq(memberships.studioId, studioId), eq(memberships.userId, userId)));
    if (actor?.id !== userId) await endUserSessions(userId, { db: tx });
    await writeAudit(tx, { actor, studioId, action: "member.remove", subjectType: "user", subjectId: userId, before: { role: target.role }, after: null });
  });
}
