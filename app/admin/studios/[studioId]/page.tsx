import type { Metadata } from "next";
import { AdminStudio } from "@/components/admin/admin-studio";
import { requireAdmin } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Admin · Studio" };
export const dynamic = "force-dynamic";

export default async function AdminStudioRoute({ params }: { params: Promise<{ studioId: string }> }) {
  const { studioId } = await params;
  await requireAdmin(`/admin/studios/${encodeURIComponent(studioId)}`);
  return <AdminStudio studioId={studioId} />;
}
