import "server-only";
import { ApiError } from "@/lib/errors";
import { errorResponse } from "./respond";

export const HTTP_METHODS = ["GET", "POST", "PUT", "PATCH", "DELETE"] as const;
export type HttpMethod = (typeof HTTP_METHODS)[number];

type Handler = (req: Request) => Promise<Response>;

/**
 * Handlers for the methods a route does not support (405 JSON with an `Allow` header), plus an
 * OPTIONS that reports the true `Allow` list (Next's automatic OPTIONS would list the 405 stubs too).
 * Usage in a route file: `export const { PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET", "POST"]);`
 */
export function otherMethods(allowed: readonly HttpMethod[]): Record<HttpMethod | "OPTIONS", Handler> {
  const allow = [...allowed, ...(allowed.includes("GET") ? ["HEAD"] : []), "OPTIONS"].join(", ");
  const options: Handler = async () => new Response(null, { status: 204, headers: { allow } });
  // Marked so the authorisation matrix can tell a 405 stub from a handler that forgot its guard.
  const handler: Handler = Object.assign(
    async (req: Request) =>
      errorResponse(
        new ApiError("method_not_allowed", `Method ${req.method} is not allowed here; allowed: ${allow}.`, undefined, undefined, {
          allow,
        }),
      ),
    { methodNotAllowed: true as const },
  );
  return { ...(Object.fromEntries(HTTP_METHODS.map((m) => [m, handler])) as Record<HttpMethod, Handler>), OPTIONS: options };
}
