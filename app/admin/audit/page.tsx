import type { Metadata } from "next";
import { AdminAudit } from "@/components/admin/admin-audit";
import { requireAdmin } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Admin · Audit log" };
export const dynamic = "force-dynamic";

export default async function AdminAuditRoute() {
  await requireAdmin("/admin/audit");
  return <AdminAudit />;
}
