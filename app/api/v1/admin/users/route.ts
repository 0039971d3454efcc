import { withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { allUsers } from "@/lib/studios/studios";
import { PLATFORM_ADMIN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth(PLATFORM_ADMIN, async () => json({ users: await allUsers() }));

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
