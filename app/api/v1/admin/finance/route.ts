import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { financeView } from "@/lib/billing/finance-ops";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth({ access: "admin" }, async () => json(await financeView(await getDb())));

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
