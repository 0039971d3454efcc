/**
 * Only same-site paths are accepted as a post-sign-in destination, so a crafted
 * `?callbackUrl=https://elsewhere` link cannot send a user off-site.
 */
export function safeCallbackUrl(raw: string | string[] | undefined, fallback = "/studios"): string {
  const value = Array.isArray(raw) ? raw[0] : raw;
  if (!value) return fallback;
  if (value.startsWith("/") && !value.startsWith("//") && !value.startsWith("/\\")) return value;
  try {
    // next-auth hands back absolute URLs on our own origin; keep only their path.
    const parsed = new URL(value);
    const base = process.env.NEXTAUTH_URL ?? (typeof window !== "undefined" ? window.location.origin : "");
    if (base && parsed.origin === new URL(base).origin) return `${parsed.pathname}${parsed.search}${parsed.hash}`;
  } catch {
    // Not a URL at all: fall through to the default.
  }
  return fallback;
}

const SIGN_IN_ERRORS: Record<string, string> = {
  CredentialsSignin: "Invalid e-mail or password.",
  Verification: "That sign-in link has expired or was already used. Ask for a new one below.",
  EmailSignin: "We could not send the sign-in e-mail. Check the address and try again.",
  SessionRequired: "Please sign in to see that page.",
};

/** next-auth reports failures as short codes in `?error=`; turn them into sentences. */
export function signInErrorMessage(code: string | string[] | undefined): string | undefined {
  const value = Array.isArray(code) ? code[0] : code;
  if (!value) return undefined;
  return SIGN_IN_ERRORS[value] ?? "Sign-in failed. Please try again.";
}
