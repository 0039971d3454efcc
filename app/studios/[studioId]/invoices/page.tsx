import type { Metadata } from "next";
import { InvoicesPage } from "@/components/billing/invoices-page";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Invoices" };
export const dynamic = "force-dynamic";

export default async function InvoicesRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/invoices`, roles: ["owner", "finance"] });
  return <InvoicesPage studioId={access.studio.id} studioName={access.studio.name} role={access.role} />;
}
