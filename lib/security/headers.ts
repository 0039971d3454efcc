import "server-only";

/**
 * The security headers of every response, decided in one place (proxy.ts applies them to pages, API
 * answers, error pages and static files alike). Pure and free of imports, so the proxy bundle stays small
 * and tests can call it directly.
 */

export interface SecurityContext {
  /** A fresh, unguessable value per request; pages' scripts carry it (Next adds it to its own). */
  nonce: string;
  /** Served over HTTPS (directly, or behind a proxy that says so): HSTS and upgrade-insecure-requests. */
  https: boolean;
  /** `next dev`: React needs eval for its debugging stacks there, never in production. */
  development: boolean;
  /** API answers (JSON, files): nothing in them may run or load anything. */
  api: boolean;
}

/** Two years, with subdomains: common practice for HSTS (and the preload list's minimum is one year). */
export const HSTS_VALUE = "max-age=63072000; includeSubDomains";

export function contentSecurityPolicy(context: SecurityContext): string {
  if (context.api) return "default-src 'none'; frame-ancestors 'none'; base-uri 'none'; form-action 'none'";
  const directives = [
    "default-src 'self'",
    // Only scripts carrying this request's nonce, and what they load ('strict-dynamic'): Next's runtime,
    // its chunks and inline payloads, and the layout's theme boot script.
    `script-src 'self' 'nonce-${context.nonce}' 'strict-dynamic'${context.development ? " 'unsafe-eval'" : ""}`,
    // Inline style attributes come from React's style props (charts, bars); scripts stay nonce-only.
    "style-src 'self' 'unsafe-inline'",
    // Canvas exports (PNG) are blob: and data: URLs.
    "img-src 'self' data: blob:",
    "font-src 'self'",
    "connect-src 'self'",
    "object-src 'none'",
    "base-uri 'self'",
    "form-action 'self'",
    "frame-ancestors 'none'",
  ];
  if (context.https) directives.push("upgrade-insecure-requests");
  return directives.join("; ");
}

/** Every security header of a response, by name. */
export function securityHeaders(context: SecurityContext): Record<string, string> {
  const headers: Record<string, string> = {
    "content-security-policy": contentSecurityPolicy(context),
    // For browsers without frame-ancestors: the checkout and token pages are never framed.
    "x-frame-options": "DENY",
    "x-content-type-options": "nosniff",
    "referrer-policy": "strict-origin-when-cross-origin",
  };
  if (context.https) headers["strict-transport-security"] = HSTS_VALUE;
  return headers;
}

/**
 * Whether a request reached us over HTTPS: the request's own scheme, or `x-forwarded-proto: https` from
 * the TLS-terminating proxy in front, or a configured https NEXTAUTH_URL (the public address).
 */
export function servedOverHttps(url: URL, forwardedProto: string | null, publicUrl: string | undefined): boolean {
  if (url.protocol === "https:") return true;
  if (forwardedProto?.split(",")[0]?.trim().toLowerCase() === "https") return true;
  return Boolean(publicUrl?.startsWith("https://"));
}

/** A nonce of 128 random bits, base64 (the CSP grammar's base64-value). */
export function newNonce(): string {
  const bytes = new Uint8Array(16);
  crypto.getRandomValues(bytes);
  let binary = "";
  for (const byte of bytes) binary += String.fromCharCode(byte);
  return btoa(binary);
}
