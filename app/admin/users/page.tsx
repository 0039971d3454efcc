import type { Metadata } from "next";
import { AdminUsers } from "@/components/admin/admin-users";
import { requireAdmin } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Admin · Users" };
export const dynamic = "force-dynamic";

export default async function AdminUsersRoute() {
  const admin = await requireAdmin("/admin/users");
  return <AdminUsers selfId={admin.id} />;
}
