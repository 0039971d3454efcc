import { withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { allStudios } from "@/lib/studios/studios";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth({ access: "admin" }, async () => json({ studios: await allStudios() }));

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
