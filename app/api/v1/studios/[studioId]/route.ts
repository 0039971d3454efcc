import { withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { studioView } from "@/lib/studios/studios";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth({ access: "studio", roles: "member", token: "read" }, async ({ studio, role }) => {
  return json({ studio: studioView(studio), role });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
