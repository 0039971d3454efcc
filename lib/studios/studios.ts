import "server-only";
import { asc, count, eq } from "drizzle-orm";
import { z } from "@/lib/zod";
import { getDb } from "@/db/client";
import { newId } from "@/db/ids";
import { memberships, STUDIO_ROLES, STUDIO_STATUSES, studios, users, type Studio } from "@/db/schema";
import { appendLedgerEntry, welcomeGrant } from "@/lib/ledger/ledger";
import { displayNameSchema } from "@/lib/api/text";

export const createStudioSchema = z.strictObject({
  name: displayNameSchema("Name", 80),
});

/** A studio as the API shows it; the OpenAPI document describes answers with it. */
export const studioViewSchema = z.strictObject({ id: z.string(), name: z.string(), status: z.enum(STUDIO_STATUSES), createdAt: z.iso.datetime() }).meta({ id: "Studio" });
export type StudioView = z.infer<typeof studioViewSchema>;
/** One of the caller's studios, with the caller's role in it. */
export const studioOfUserSchema = z.strictObject({ id: z.string(), name: z.string(), role: z.enum(STUDIO_ROLES) }).meta({ id: "StudioMembership" });

export function studioView(studio: Studio): StudioView {
  return { id: studio.id, name: studio.name, status: studio.status, createdAt: studio.createdAt.toISOString() };
}

/** Creates a studio whose creator is its first owner, with its welcome grant of compute minutes, in one transaction. */
export async function createStudio(ownerUserId: string, input: z.infer<typeof createStudioSchema>): Promise<Studio> {
  const db = await getDb();
  return db.transaction(async (tx) => {
    const [studio] = await tx.insert(studios).values({ id: newId("std"), name: input.name }).returning();
    await tx.insert(memberships).values({ studioId: studio.id, userId: ownerUserId, role: "owner" });
    await appendLedgerEntry(tx, welcomeGrant(studio.id));
    return studio;
  });
}

export async function studiosOfUser(userId: string): Promise<z.infer<typeof studioOfUserSchema>[]> {
  const db = await getDb();
  return db
    .select({ id: studios.id, name: studios.name, role: memberships.role })
    .from(memberships)
    .innerJoin(studios, eq(studios.id, memberships.studioId))
    .where(eq(memberships.userId, userId))
    .orderBy(asc(studios.name), asc(studios.id));
}

export async function allUsers(): Promise<
  { id: string; email: string; name: string; isAdmin: boolean; createdAt: string; studioCount: number }[]
> {
  const db = await getDb();
  const rows = await db
    .select({ user: users, studioCount: count(memberships.studioId) })
    .from(users)
    .leftJoin(memberships, eq(memberships.userId, users.id))
    .groupBy(users.id)
    .orderBy(asc(users.createdAt), asc(users.id));
  return rows.map((r) => ({
    id: r.user.id,
    email: r.user.email,
    name: r.user.name,
    isAdmin: r.user.isAdmin,
    createdAt: r.user.createdAt.toISOString(),
    studioCount: Number(r.studioCount),
  }));
}
