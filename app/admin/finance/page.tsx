import type { Metadata } from "next";
import { FinancePage } from "@/components/admin/finance-page";
import { requireAdmin } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Finance" };
export const dynamic = "force-dynamic";

export default async function AdminFinanceRoute() {
  await requireAdmin("/admin/finance");
  return <FinancePage />;
}
