/** The origin the app is served from: NEXTAUTH_URL on the server, the page's own origin in a browser. */
function siteOrigin(): string {
  if (typeof window !== "undefined") return window.location.origin;
  return new URL(process.env.NEXTAUTH_URL ?? "http://localhost:3000").origin;
}

/**
 * The one check for every post-sign-in destination, used by the server redirect (sign-in and
 * sign-up pages, next-auth's redirect callback) and by the client navigation after a sign-in.
 * The raw value is resolved against our origin with the WHATWG URL parser, which is what a
 * browser does with a Location header or `router.push`: it drops tabs and newlines, reads
 * backslashes as slashes, and decodes the scheme and host. Only a result on our own origin is
 * kept, and only as a path, re-serialised (so no raw control characters reach a header); a
 * path that would itself read as protocol-relative ("//…") is refused too.
 */
export function safeCallbackUrl(raw: string | string[] | undefined | null, fallback = "/studios"): string {
  const value = Array.isArray(raw) ? raw[0] : raw;
  if (typeof value !== "string" || value === "" || value.length > 2000) return fallback;
  let origin: string;
  let resolved: URL;
  try {
    origin = siteOrigin();
    resolved = new URL(value, `${origin}/`);
  } catch {
    return fallback;
  }
  if (resolved.origin !== origin) return fallback;
  const path = `${resolved.pathname}${resolved.search}${resolved.hash}`;
  if (!path.startsWith("/") || path.startsWith("//") || path.startsWith("/\\")) return fallback;
  return path;
}

const SIGN_IN_ERRORS: Record<string, string> = {
  CredentialsSignin: "Invalid e-mail or password.",
  Verification: "That sign-in link has expired or was already used. Ask for a new one below.",
  EmailSignin: "We could not send the sign-in e-mail. Check the address and try again.",
  SessionRequired: "Please sign in to see that page.",
  TooManyRequests: "Too many sign-in links were asked for. Wait a while, then try again.",
};

/** next-auth reports failures as short codes in `?error=`; turn them into sentences. */
export function signInErrorMessage(code: string | string[] | undefined): string | undefined {
  const value = Array.isArray(code) ? code[0] : code;
  if (!value) return undefined;
  return SIGN_IN_ERRORS[value] ?? "Sign-in failed. Please try again.";
}
