import type { Metadata } from "next";
import { BillingPage } from "@/components/billing/billing-page";
import { requireStudio } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Billing" };
export const dynamic = "force-dynamic";

export default async function BillingRoute({ params, searchParams }: { params: Promise<{ studioId: string }>; searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const { studioId } = await params;
  const query = await searchParams;
  const access = await requireStudio(studioId, { callbackUrl: `/studios/${studioId}/billing`, roles: ["owner", "finance"] });
  const checkout = typeof query.checkout === "string" && ["success", "cancelled"].includes(query.checkout) ? query.checkout : null;
  const sessionId = checkout === "success" && typeof query.session_id === "string" && /^cs_[A-Za-z0-9_]{1,250}$/.test(query.session_id) ? query.session_id : null;
  return <BillingPage studioId={access.studio.id} studioName={access.studio.name} role={access.role} checkout={checkout} sessionId={sessionId} />;
}
