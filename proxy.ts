import { NextResponse, type NextRequest } from "next/server";
import { pathDecodes } from "@/lib/api/path-segments";

/**
 * Runs before routing. A path with a malformed percent-escape (`/api/v1/studios/%ZZ/sweeps`)
 * cannot name anything, and decoding it inside the router would answer 500: answer 404 here,
 * as JSON under /api and as plain text elsewhere.
 */
export function proxy(request: NextRequest): NextResponse {
  const { pathname } = request.nextUrl;
  if (pathDecodes(pathname)) {
    // No page of ours is meant to be shown inside another site's frame (sign-in above all: a framed
    // form invites clickjacking). Kept to this one header here; the site's full header set is separate.
    const next = NextResponse.next();
    next.headers.set("x-frame-options", "DENY");
    return next;
  }
  if (pathname.startsWith("/api/"))
    return NextResponse.json(
      { error: { code: "not_found", message: "Not found: the path holds a malformed percent-escape." } },
      { status: 404, headers: { "cache-control": "no-store" } },
    );
  return new NextResponse("Not found.", { status: 404, headers: { "content-type": "text/plain; charset=utf-8", "cache-control": "no-store" } });
}

export const config = {
  // Only paths that hold a percent sign can be malformed; everything else skips the proxy entirely.
  matcher: ["/:path*"],
};
