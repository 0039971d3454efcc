import type { Metadata } from "next";
import { MembersManager } from "@/components/studio/members-manager";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Members" };
export const dynamic = "force-dynamic";

export default async function MembersRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/members`, roles: ["owner"] });
  return <MembersManager studioId={access.studio.id} studioName={access.studio.name} currentUserId={access.user.id} />;
}
