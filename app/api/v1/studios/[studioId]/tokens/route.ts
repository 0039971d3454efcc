import { createApiToken, createTokenSchema, listApiTokens } from "@/lib/auth/api-tokens";
import { withAuth, OWNERS_ONLY } from "@/lib/auth/guard";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Any member sees the list (names, prefixes, dates; never secrets); tokens never manage tokens.
export const GET = withAuth({ access: "studio", roles: "member", token: "never" }, async ({ studio }) => {
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
