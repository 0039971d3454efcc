import { createApiToken, createTokenSchema, listApiTokens } from "@/lib/auth/api-tokens";
import { withAuth } from "@/lib/auth/guard";
import { OWNERS_ONLY } from "@/lib/auth/policies";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Owners only, as documented: names, prefixes, last use and invitees' addresses are not for every member.
export const GET = withAuth(OWNERS_ONLY, async ({ studio }) => {
  return json({ tokens: await listApiTokens(studio.id) });
});

export const POST = withAuth(OWNERS_ONLY, async ({ req, studio, user }) => {
  const input = await parseBody(req, createTokenSchema);
  const { token, secret } = await createApiToken(studio.id, user!, input);
  return json(
    { token: { id: token.id, name: token.name, scopes: token.scopes, prefix: token.prefix, createdAt: token.createdAt }, secret },
    201,
  );
});

export const { PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET", "POST"]);
