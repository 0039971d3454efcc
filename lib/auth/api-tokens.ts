import "server-only";
import { and, desc, eq, isNull } from "drizzle-orm";
import { z } from "@/lib/zod";
import { getDb } from "@/db/client";
import { newId, sha256Hex } from "@/db/ids";
import { API_TOKEN_SCOPES, apiTokens, type ApiToken, type ApiTokenScope, type User } from "@/db/schema";
import { writeAudit } from "@/lib/audit/audit";
import { randomBytes } from "node:crypto";
import { ApiError } from "@/lib/errors";
import { displayNameSchema } from "@/lib/api/text";

export const API_TOKEN_SECRET_PREFIX = "kd_";
/** Characters of the secret kept in clear for display ("kd_" plus 8). */
const DISPLAY_PREFIX_LENGTH = 11;
/** lastUsedAt is refreshed at most this often, so a busy token does not write on every request. */
const LAST_USED_RESOLUTION_MS = 60_000;

export const createTokenSchema = z.strictObject({
  name: displayNameSchema("Name", 100),
  scopes: z
    .array(z.enum(API_TOKEN_SCOPES, { error: 'Each scope must be "read" or "write".' }), { error: "Scopes are required." })
    .min(1, { error: "Choose at least one scope." })
    .max(API_TOKEN_SCOPES.length, { error: `At most ${API_TOKEN_SCOPES.length} scopes.` })
    .refine((scopes) => new Set(scopes).size === scopes.length, { error: "Scopes must not repeat." }),
});

/** An API token as the API shows it (never its secret); the OpenAPI document describes answers with it. */
export const apiTokenViewSchema = z
  .strictObject({
    id: z.string(),
    name: z.string(),
    scopes: z.array(z.enum(API_TOKEN_SCOPES)),
    prefix: z.string().describe("The secret's first characters, to tell tokens apart."),
    createdAt: z.iso.datetime(),
    lastUsedAt: z.iso.datetime().nullable(),
    revokedAt: z.iso.datetime().nullable(),
  })
  .meta({ id: "ApiToken" });
export type ApiTokenView = z.infer<typeof apiTokenViewSchema>;

export function tokenView(token: ApiToken): ApiTokenView {
  return {
    id: token.id,
    name: token.name,
    scopes: token.scopes as ApiTokenScope[],
    prefix: token.prefix,
    createdAt: token.createdAt.toISOString(),
    lastUsedAt: token.lastUsedAt?.toISOString() ?? null,
    revokedAt: token.revokedAt?.toISOString() ?? null,
  };
}

export async function createApiToken(
  studioId: string,
  createdBy: Pick<User, "id" | "email">,
  input: z.infer<typeof createTokenSchema>,
): Promise<{ token: ApiTokenView; secret: string }> {
  const secret = API_TOKEN_SECRET_PREFIX + randomBytes(32).toString("base64url");
  const db = await getDb();
  // Stored in a fixed order so the same choice always reads the same.
  const scopes = API_TOKEN_SCOPES.filter((s) => input.scopes.includes(s));
  const row = await db.transaction(async (tx) => {
    const [created] = await tx
      .insert(apiTokens)
      .values({
        id: newId("tok"),
        studioId,
        name: input.name,
        tokenHash: sha256Hex(secret),
        prefix: secret.slice(0, DISPLAY_PREFIX_LENGTH),
        scopes,
        createdByUserId: createdBy.id,
      })
      .returning();
    // The secret never enters the audit log; the prefix identifies the token.
    await writeAudit(tx, { actor: createdBy, studioId, action: "token.create", subjectType: "api_token", subjectId: created.id, before: null, after: { name: created.name, scopes, prefix: created.prefix } });
    return created;
  });
  return { token: tokenView(row), secret };
}

export async function listApiTokens(studioId: string): Promise<ApiTokenView[]> {
  const db = await getDb();
  const rows = await db.select().from(apiTokens).where(eq(apiTokens.studioId, studioId)).orderBy(desc(apiTokens.createdAt));
  return rows.map(tokenView);
}

/** Revokes (the row stays, with revokedAt); revoking twice keeps the first time. */
export async function revokeApiToken(studioId: string, tokenId: string, actor: Pick<User, "id" | "email"> | null = null): Promise<ApiTokenView> {
  const db = await getDb();
  const [row] = await db
    .select()
    .from(apiTokens)
    .where(and(eq(apiTokens.id, tokenId), eq(apiTokens.studioId, studioId)));
  if (!row) throw new ApiError("not_found", "API token not found.");
  if (row.revokedAt) return tokenView(row);
  const updated = await db.transaction(async (tx) => {
    const [revoked] = await tx
      .update(apiTokens)
      .set({ revokedAt: new Date() })
      .where(and(eq(apiTokens.id, tokenId), isNull(apiTokens.revokedAt)))
      .returning();
    if (!revoked) return null; // a concurrent revoke won; keep its time and its audit record
    await writeAudit(tx, { actor, studioId, action: "token.revoke", subjectType: "api_token", subjectId: tokenId, before: { revokedAt: null }, after: { revokedAt: revoked.revokedAt?.toISOString() ?? null } });
    return revoked;
  });
  if (!updated) {
    const [current] = await db.select().from(apiTokens).where(eq(apiTokens.id, tokenId));
    return tokenView(current);
  }
  return tokenView(updated);
}

/** The live token for a presented secret, or null if unknown or revoked. Marks it used. */
export async function authenticateApiToken(secret: string): Promise<ApiToken | null> {
  if (!secret.startsWith(API_TOKEN_SECRET_PREFIX) || secret.length > 200) return null;
  const db = await getDb();
  const [row] = await db.select().from(apiTokens).where(eq(apiTokens.tokenHash, sha256Hex(secret)));
  if (!row || row.revokedAt) return null;
  const now = new Date();
  if (!row.lastUsedAt || now.getTime() - row.lastUsedAt.getTime() >= LAST_USED_RESOLUTION_MS) {
    await db.update(apiTokens).set({ lastUsedAt: now }).where(eq(apiTokens.id, row.id));
    row.lastUsedAt = now;
  }
  return row;
}
