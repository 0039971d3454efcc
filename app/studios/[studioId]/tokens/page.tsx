import type { Metadata } from "next";
import { Forbidden } from "@/components/forbidden";
import { TokensManager } from "@/components/studio/tokens-manager";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "API tokens" };
export const dynamic = "force-dynamic";

export default async function TokensRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/tokens`, roles: ["owner"] });
  if (access.status === "forbidden") {
    return (
      <Forbidden
        title="Only owners manage API tokens"
        reason={`You are ${access.role === "engineer" ? "an engineer" : `a ${access.role}`} in ${access.studio.name}. Creating and revoking tokens needs the owner role.`}
        backHref={`/studios/${access.studio.id}`}
        backLabel={`Back to ${access.studio.name}`}
      />
    );
  }
  return <TokensManager studioId={access.studio.id} studioName={access.studio.name} />;
}
