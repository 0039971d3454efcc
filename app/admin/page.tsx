import type { Metadata } from "next";
import { AdminHome } from "@/components/admin/admin-home";
import { requireAdmin } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Admin" };
export const dynamic = "force-dynamic";

export default async function AdminRoute() {
  await requireAdmin("/admin");
  return <AdminHome />;
}
