import { withAuth } from "@/lib/auth/guard";
import { OWNERS_ONLY } from "@/lib/auth/policies";
import { parseBody } from "@/lib/api/body";
import { consumeRateLimit } from "@/lib/auth/rate-limits";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { createInvite, createInviteSchema, listInvites } from "@/lib/studios/invites";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Owners only, as documented: names, prefixes, last use and invitees' addresses are not for every member.
export const GET = withAuth(OWNERS_ONLY, async ({ studio }) => {
  return json({ invites: await listInvites(studio.id) });
});

export const POST = withAuth(OWNERS_ONLY, async ({ req, studio, user }) => {
  const input = await parseBody(req, createInviteSchema);
  // Each invitation is a mail: limited per studio.
  await consumeRateLimit("invitesPerStudio", studio.id);
  const { invite, mailSent } = await createInvite(studio.id, user!, input);
  return json({ invite: { id: invite.id, email: invite.email, role: invite.role, expiresAt: invite.expiresAt }, mailSent }, 201);
});

export const { PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET", "POST"]);
