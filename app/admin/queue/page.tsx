import type { Metadata } from "next";
import { AdminQueue } from "@/components/admin/admin-queue";
import { requireAdmin } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Admin · Queue" };
export const dynamic = "force-dynamic";

export default async function AdminQueueRoute() {
  await requireAdmin("/admin/queue");
  return <AdminQueue />;
}
