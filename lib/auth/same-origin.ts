import "server-only";
import { ApiError } from "@/lib/errors";
import { appBaseUrl } from "./config";
import { hasSessionCookie } from "./session";

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

/** The origins this server answers as: the configured public URL and the URL the request was addressed to. */
function ownOrigins(req: Request): Set<string> {
  const origins = new Set<string>();
  try {
    origins.add(new URL(appBaseUrl()).origin);
  } catch {
    // A malformed NEXTAUTH_URL is reported at start-up; here it only fails to match.
  }
  try {
    origins.add(new URL(req.url).origin);
  } catch {
    // not reachable with a real Request
  }
  return origins;
}

/**
 * A state-changing request that carries the session cookie must come from one of our own pages:
 * its `Origin` is ours, or, when a browser sends no Origin, `Sec-Fetch-Site` says same-origin.
 * A page elsewhere (another site, or another port of this host, which is "same-site" to a browser
 * and so gets SameSite=Lax cookies on some requests) is refused before the handler runs. Calls
 * with an API token (Authorization header) carry no ambient credential and are not checked.
 */
export function assertSameOriginWrite(req: Request): void {
  if (SAFE_METHODS.has(req.method.toUpperCase())) return;
  if (req.headers.get("authorization") !== null) return;
  if (!hasSessionCookie(req.headers.get("cookie"))) return;
  const origin = req.headers.get("origin");
  if (origin !== null) {
    if (origin !== "null" && ownOrigins(req).has(origin)) return;
    throw new ApiError("cross_origin", `origin: requests signed in by cookie must come from this site's own pages; ${origin} is not this site.`, "origin");
  }
  if (req.headers.get("sec-fetch-site") === "same-origin") return;
  throw new ApiError("cross_origin", "origin: a request signed in by cookie must carry this site's Origin (or Sec-Fetch-Site: same-origin).", "origin");
}
