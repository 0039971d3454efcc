import type { Metadata } from "next";
import { TokensManager } from "@/components/studio/tokens-manager";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "API tokens" };
export const dynamic = "force-dynamic";

export default async function TokensRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/tokens`, roles: ["owner"] });
  return <TokensManager studioId={access.studio.id} studioName={access.studio.name} />;
}
