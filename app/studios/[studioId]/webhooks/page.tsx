import type { Metadata } from "next";
import { WebhooksManager } from "@/components/studio/webhooks-manager";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Webhooks" };
export const dynamic = "force-dynamic";

export default async function WebhooksRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/webhooks`, roles: ["owner"] });
  return <WebhooksManager studioId={access.studio.id} studioName={access.studio.name} />;
}
