import { getDb } from "@/db/client";
import { parseWith } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { auditCsv, auditQuerySchema, listAudit } from "@/lib/audit/audit";
import { withAuth } from "@/lib/auth/guard";
import { PLATFORM_ADMIN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Filters: studioId, action, actor (e-mail), from, to (ISO), limit; format=csv downloads the same rows.
export const GET = withAuth(PLATFORM_ADMIN, async ({ req }) => {
  const query = parseWith(auditQuerySchema, Object.fromEntries(new URL(req.url).searchParams));
  const entries = await listAudit(await getDb(), query);
  if (query.format === "csv")
    return new Response(auditCsv(entries), {
      status: 200,
      headers: {
        "content-type": "text/csv; charset=utf-8",
        "content-disposition": `attachment; filename="kickdrift-audit-${new Date().toISOString().slice(0, 10)}.csv"`,
        "cache-control": "no-store",
      },
    });
  return json({ entries });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
