import type { Metadata } from "next";
import { StudiosPage } from "@/components/studio/studios-page";
import { requireUser } from "@/lib/auth/page-guard";
import { studiosOfUser } from "@/lib/studios/studios";

export const metadata: Metadata = { title: "Studios" };
export const dynamic = "force-dynamic";

export default async function StudiosRoute() {
  const user = await requireUser("/studios");
  // The list comes with the page (the same rows as GET /api/v1/studios), so it paints without a loading row.
  return <StudiosPage userName={user.name} initialStudios={await studiosOfUser(user.id)} />;
}
