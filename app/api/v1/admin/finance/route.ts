import { getDb } from "@/db/client";
import { withAuth } from "@/lib/auth/guard";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { platformFinance } from "@/lib/billing/queries";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

export const GET = withAuth({ access: "admin" }, async () => json(await platformFinance(await getDb())));

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
