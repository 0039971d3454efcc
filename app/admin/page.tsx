import type { Metadata } from "next";
import { AdminHome } from "@/components/admin/admin-home";
import { Forbidden } from "@/components/forbidden";
import { requireAdmin } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Admin" };
export const dynamic = "force-dynamic";

export default async function AdminRoute() {
  const access = await requireAdmin("/admin");
  if (access.status === "forbidden") return <Forbidden title="Admins only" reason={access.message} />;
  return <AdminHome />;
}
