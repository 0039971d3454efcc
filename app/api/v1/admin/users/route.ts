import { withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { allUsers } from "@/lib/studios/studios";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth({ access: "admin" }, async () => json({ users: await allUsers() }));

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
