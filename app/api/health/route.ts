import { otherMethods } from "@/lib/api/methods";
import { withAuth } from "@/lib/auth/guard";
import { healthResponse } from "@/lib/ops/endpoints";
import { PUBLIC } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Liveness for load balancers and orchestrators: public, touches nothing but the process.
export const GET = withAuth(PUBLIC, async () => healthResponse("app"));

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
