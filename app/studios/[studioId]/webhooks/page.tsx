import type { Metadata } from "next";
import { WebhooksManager } from "@/components/studio/webhooks-manager";
import { getDb } from "@/db/client";
import { requireStudio } from "@/lib/auth/page-guard";
import { listEndpoints } from "@/lib/webhooks/webhooks";

export const metadata: Metadata = { title: "Webhooks" };
export const dynamic = "force-dynamic";

export default async function WebhooksRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/webhooks`, roles: ["owner"] });
  // The list comes with the page (the same views as GET …/webhooks), so it paints without a loading row.
  const endpoints = await listEndpoints(await getDb(), access.studio.id);
  return <WebhooksManager studioId={access.studio.id} studioName={access.studio.name} initialEndpoints={endpoints} />;
}
