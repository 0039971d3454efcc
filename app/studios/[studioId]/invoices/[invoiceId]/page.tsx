import type { Metadata } from "next";
import { InvoiceDetailPage } from "@/components/billing/invoices-page";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Invoice" };
export const dynamic = "force-dynamic";

export default async function InvoiceRoute({ params }: { params: Promise<{ studioId: string; invoiceId: string }> }) {
  const { studioId, invoiceId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/invoices/${invoiceId}`, roles: ["owner", "finance"] });
  return <InvoiceDetailPage studioId={access.studio.id} studioName={access.studio.name} role={access.role} invoiceId={invoiceId} />;
}
