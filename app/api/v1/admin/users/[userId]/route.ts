import { getDb } from "@/db/client";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { platformRoleSchema, setPlatformRole } from "@/lib/quotas/admin";
import { PLATFORM_ADMIN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// { isAdmin, reason? }: grant or remove the platform admin role (audited).
export const PATCH = withAuth<typeof PLATFORM_ADMIN, { userId: string }>(PLATFORM_ADMIN, async ({ req, params, user }) => {
  const input = await parseBody(req, platformRoleSchema);
  return json({ user: await setPlatformRole(await getDb(), user, params.userId, input) });
});

export const { GET, POST, PUT, DELETE, OPTIONS } = otherMethods(["PATCH"]);
