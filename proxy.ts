import { NextResponse, type NextRequest } from "next/server";
import { pathDecodes } from "@/lib/api/path-segments";
import { newNonce, securityHeaders, servedOverHttps } from "@/lib/security/headers";

/**
 * Runs before routing, on every request: the one place that sets the security headers
 * (lib/security/headers.ts) on pages, API answers, error pages and static files. Pages get a fresh
 * CSP nonce; Next reads it from the request's Content-Security-Policy header and puts it on its own
 * scripts, the layout on its inline one.
 *
 * A path with a malformed percent-escape (`/api/v1/studios/%ZZ/sweeps`) cannot name anything, and
 * decoding it inside the router would answer 500: it gets a 404 here, as JSON under /api and as plain
 * text elsewhere, with the same headers.
 */
export function proxy(request: NextRequest): NextResponse {
  const { pathname } = request.nextUrl;
  const nonce = newNonce();
  const api = pathname.startsWith("/api/");
  const headers = securityHeaders({
    nonce,
    api,
    development: process.env.NODE_ENV === "development",
    https: servedOverHttps(request.nextUrl, request.headers.get("x-forwarded-proto"), process.env.NEXTAUTH_URL),
  });
  let response: NextResponse;
  if (!pathDecodes(pathname)) {
    response = api
      ? NextResponse.json({ error: { code: "not_found", message: "Not found: the path holds a malformed percent-escape." } }, { status: 404, headers: { "cache-control": "no-store" } })
      : new NextResponse("Not found.", { status: 404, headers: { "content-type": "text/plain; charset=utf-8", "cache-control": "no-store" } });
  } else {
    const requestHeaders = new Headers(request.headers);
    if (!api) {
      requestHeaders.set("x-nonce", nonce);
      requestHeaders.set("content-security-policy", headers["content-security-policy"]);
    }
    response = NextResponse.next({ request: { headers: requestHeaders } });
  }
  for (const [name, value] of Object.entries(headers)) response.headers.set(name, value);
  return response;
}
