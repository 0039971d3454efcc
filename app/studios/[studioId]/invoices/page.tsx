import type { Metadata } from "next";
import { InvoicesPage } from "@/components/billing/invoices-page";
import { getDb } from "@/db/client";
import { requireStudio } from "@/lib/auth/page-guard";
import { listInvoices } from "@/lib/billing/queries";

export const metadata: Metadata = { title: "Invoices" };
export const dynamic = "force-dynamic";

export default async function InvoicesRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/invoices`, roles: ["owner", "finance"] });
  // The list comes with the page (the same function as GET …/billing/invoices), so it paints without a loading row.
  return <InvoicesPage studioId={access.studio.id} studioName={access.studio.name} role={access.role} initialInvoices={await listInvoices(await getDb(), access.studio.id)} />;
}
