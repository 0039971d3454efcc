import { ApiError } from "@/lib/errors";
import { errorResponse } from "@/lib/api/respond";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Any /api path without a route of its own: 404 JSON for every method (never the HTML not-found page).
async function unknownRoute(req: Request): Promise<Response> {
  const { pathname } = new URL(req.url);
  return errorResponse(new ApiError("not_found", `No API route at ${req.method} ${pathname}.`));
}

export {
  unknownRoute as GET,
  unknownRoute as POST,
  unknownRoute as PUT,
  unknownRoute as PATCH,
  unknownRoute as DELETE,
  unknownRoute as OPTIONS,
};
