import type { Metadata } from "next";
import { Forbidden } from "@/components/forbidden";
import { MembersManager } from "@/components/studio/members-manager";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Members" };
export const dynamic = "force-dynamic";

export default async function MembersRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/members`, roles: ["owner"] });
  if (access.status === "forbidden") {
    return (
      <Forbidden
        title="Only owners manage members"
        reason={`You are ${access.role === "engineer" ? "an engineer" : `a ${access.role}`} in ${access.studio.name}. Inviting, changing roles and removing members need the owner role.`}
        backHref={`/studios/${access.studio.id}`}
        backLabel={`Back to ${access.studio.name}`}
      />
    );
  }
  return <MembersManager studioId={access.studio.id} studioName={access.studio.name} currentUserId={access.user.id} />;
}
