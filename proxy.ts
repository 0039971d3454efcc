import { NextResponse, type NextRequest } from "next/server";
import { newNonce, securityHeaders, servedOverHttps } from "@/lib/security/headers";

/**
 * The one place that sets the security headers (lib/security/headers.ts) on every response: pages,
 * API answers, error pages and static files. Pages get a fresh CSP nonce; Next reads it from the
 * request's Content-Security-Policy header and puts it on its own scripts, the layout on its inline one.
 */
export function proxy(request: NextRequest): NextResponse {
  const nonce = newNonce();
  const api = request.nextUrl.pathname.startsWith("/api/");
  const headers = securityHeaders({
    nonce,
    api,
    development: process.env.NODE_ENV === "development",
    https: servedOverHttps(request.nextUrl, request.headers.get("x-forwarded-proto"), process.env.NEXTAUTH_URL),
  });
  const requestHeaders = new Headers(request.headers);
  if (!api) {
    requestHeaders.set("x-nonce", nonce);
    requestHeaders.set("content-security-policy", headers["content-security-policy"]);
  }
  const response = NextResponse.next({ request: { headers: requestHeaders } });
  for (const [name, value] of Object.entries(headers)) response.headers.set(name, value);
  return response;
}
