import type { Metadata } from "next";
import { StudiosPage } from "@/components/studio/studios-page";
import { requireUser } from "@/lib/auth/page-guard";

export const metadata: Metadata = { title: "Studios" };
export const dynamic = "force-dynamic";

export default async function StudiosRoute() {
  const user = await requireUser("/studios");
  return <StudiosPage userName={user.name} />;
}
