import type { Metadata } from "next";
import { TokensManager } from "@/components/studio/tokens-manager";
import { listApiTokens } from "@/lib/auth/api-tokens";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "API tokens" };
export const dynamic = "force-dynamic";

export default async function TokensRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/tokens`, roles: ["owner"] });
  // The list comes with the page (the same views as GET …/tokens), so it paints without a loading row.
  return <TokensManager studioId={access.studio.id} studioName={access.studio.name} initialTokens={await listApiTokens(access.studio.id)} />;
}
