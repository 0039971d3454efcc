import { ApiError } from "@/lib/errors";
import { errorResponse } from "./respond";

export const HTTP_METHODS = ["GET", "POST", "PUT", "PATCH", "DELETE"] as const;
export type HttpMethod = (typeof HTTP_METHODS)[number];

type Handler = (req: Request) => Promise<Response>;

/**
 * Handlers for the methods a route does not support: 405 JSON with an `Allow` header.
 * Usage in a route file: `export const { PUT, PATCH, DELETE } = otherMethods(["GET", "POST"]);`
 */
export function otherMethods(allowed: readonly HttpMethod[]): Record<HttpMethod, Handler> {
  const allow = [...allowed, ...(allowed.includes("GET") ? ["HEAD"] : []), "OPTIONS"].join(", ");
  const handler: Handler = async (req) =>
    errorResponse(
      new ApiError(405, "method_not_allowed", `Method ${req.method} is not allowed here; allowed: ${allow}.`, undefined, undefined, {
        allow,
      }),
    );
  return Object.fromEntries(HTTP_METHODS.map((m) => [m, handler])) as Record<HttpMethod, Handler>;
}
