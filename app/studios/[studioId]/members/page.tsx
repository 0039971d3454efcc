import type { Metadata } from "next";
import { MembersManager } from "@/components/studio/members-manager";
import { requireStudio } from "@/lib/auth/page-guard";
import { listInvites } from "@/lib/studios/invites";
import { listMembers } from "@/lib/studios/members";

export const metadata: Metadata = { title: "Members" };
export const dynamic = "force-dynamic";

export default async function MembersRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/members`, roles: ["owner"] });
  // Both lists come with the page (the same views as the API's), read together, so it paints without loading rows.
  const [members, invites] = await Promise.all([listMembers(access.studio.id), listInvites(access.studio.id)]);
  return <MembersManager studioId={access.studio.id} studioName={access.studio.name} currentUserId={access.user.id} initialMembers={members} initialInvites={invites} />;
}
