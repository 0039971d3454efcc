import { newId, newSecret, sha256Hex } from "@/db/ids";
import { apiTokens, invites, memberships, passwordResets, studios, users, type StudioRole, type User } from "@/db/schema";
import { getDb } from "@/db/client";
import { hashPassword } from "@/lib/auth/password";

let counter = 0;
/** A unique, invented address per call so tests never collide. */
export function uniqueEmail(label: string): string {
  counter += 1;
  return `${label}.${counter}.${Date.now().toString(36)}@crateworks.test`;
}

export async function makeUser(options: { email?: string; name?: string; password?: string; isAdmin?: boolean } = {}): Promise<User> {
  const db = await getDb();
  const [user] = await db
    .insert(users)
    .values({
      id: newId("usr"),
      email: (options.email ?? uniqueEmail("user")).toLowerCase(),
      name: options.name ?? "Test Person",
      passwordHash: options.password ? await hashPassword(options.password) : null,
      isAdmin: options.isAdmin ?? false,
    })
    .returning();
  return user;
}

export async function makeStudio(name: string, members: { user: User; role: StudioRole }[]): Promise<string> {
  const db = await getDb();
  const id = newId("std");
  await db.insert(studios).values({ id, name });
  for (const m of members) await db.insert(memberships).values({ studioId: id, userId: m.user.id, role: m.role });
  return id;
}

export async function makeToken(
  studioId: string,
  scopes: ("read" | "write")[],
  options: { revoked?: boolean } = {},
): Promise<{ id: string; secret: string }> {
  const db = await getDb();
  const secret = `kd_${newSecret()}`;
  const id = newId("tok");
  await db.insert(apiTokens).values({
    id,
    studioId,
    name: `factory ${scopes.join("+")}`,
    tokenHash: sha256Hex(secret),
    prefix: secret.slice(0, 11),
    scopes,
    revokedAt: options.revoked ? new Date() : null,
  });
  return { id, secret };
}

export async function makeInvite(
  studioId: string,
  email: string,
  role: StudioRole,
  options: { expiresAt?: Date } = {},
): Promise<{ id: string; secret: string }> {
  const db = await getDb();
  const secret = newSecret();
  const id = newId("inv");
  await db.insert(invites).values({
    id,
    studioId,
    email: email.toLowerCase(),
    role,
    tokenHash: sha256Hex(secret),
    expiresAt: options.expiresAt ?? new Date(Date.now() + 7 * 24 * 3600_000),
  });
  return { id, secret };
}

export async function makePasswordReset(userId: string, options: { expiresAt?: Date } = {}): Promise<string> {
  const db = await getDb();
  const secret = newSecret();
  await db.insert(passwordResets).values({
    id: newId("pwr"),
    userId,
    tokenHash: sha256Hex(secret),
    expiresAt: options.expiresAt ?? new Date(Date.now() + 3600_000),
  });
  return secret;
}
