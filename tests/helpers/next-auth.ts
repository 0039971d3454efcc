import * as nextAuthRoute from "@/app/api/auth/[...nextauth]/route";
import { buildRequest, mergeCookies } from "./http";
import { settleAfterResponse } from "@/lib/api/after-response";

type Segments = string[];

export async function nextAuth(
  segments: Segments,
  options: { method?: string; form?: Record<string, string>; cookie?: string; headers?: Record<string, string>; search?: string } = {},
): Promise<Response> {
  const handler = (options.method ?? "GET") === "POST" ? nextAuthRoute.POST : nextAuthRoute.GET;
  const headers = { ...options.headers };
  let body: string | undefined;
  if (options.form) {
    body = new URLSearchParams(options.form).toString();
    headers["content-type"] = "application/x-www-form-urlencoded";
  }
  const req = buildRequest({
    method: options.method ?? "GET",
    path: `/api/auth/${segments.join("/")}${options.search ?? ""}`,
    body,
    cookie: options.cookie,
    headers,
  });
  return handler(req, { params: Promise.resolve({ nextauth: segments }) });
}

/** GET /api/auth/csrf: the token and the cookie that must accompany it. */
export async function csrf(): Promise<{ csrfToken: string; cookie: string }> {
  const res = await nextAuth(["csrf"]);
  const { csrfToken } = (await res.json()) as { csrfToken: string };
  return { csrfToken, cookie: mergeCookies("", res) };
}

/**
 * Signs in with e-mail and password the way the browser's signIn("credentials") does.
 * Returns the session cookie on success, or the error next-auth reports to the client.
 */
export async function passwordSignIn(
  email: string,
  password: string,
  address = "203.0.113.7",
): Promise<{ ok: boolean; error: string | null; cookie: string; status: number }> {
  const { csrfToken, cookie } = await csrf();
  const res = await nextAuth(["callback", "credentials"], {
    method: "POST",
    form: { csrfToken, email, password, json: "true", callbackUrl: "http://localhost:3000/studios" },
    cookie,
    headers: { "x-forwarded-for": address },
  });
  const jar = mergeCookies(cookie, res);
  const { url } = (await res.json()) as { url: string };
  const error = new URL(url).searchParams.get("error");
  return { ok: error === null && jar.includes("next-auth.session-token="), error, cookie: jar, status: res.status };
}

/** The newest captured mail to an address (needs the mail fake running in this process). */
export async function latestCapturedMailTo(email: string) {
  const { getDb } = await import("@/db/client");
  const { mailMessages } = await import("@/db/schema");
  const { desc, like } = await import("drizzle-orm");
  const db = await getDb();
  const [message] = await db
    .select()
    .from(mailMessages)
    .where(like(mailMessages.toAddresses, `%${email}%`))
    .orderBy(desc(mailMessages.receivedAt))
    .limit(1);
  if (!message) throw new Error(`no mail to ${email}`);
  return message;
}

/** Signs in by e-mailed link as the browser does: ask for the link, then open it from the mailbox. */
export async function magicLinkSignIn(email: string, callbackUrl = "http://localhost:3000/studios"): Promise<{ response: Response; jar: string; location: string | null }> {
  const { csrfToken, cookie } = await csrf();
  await nextAuth(["signin", "email"], { method: "POST", form: { csrfToken, email, callbackUrl, json: "true" }, cookie });
  // The link is mailed after the answer (the answer's timing must not depend on the address).
  await settleAfterResponse();
  const mail = await latestCapturedMailTo(email);
  const link = new URL(mail.links.find((l) => l.includes("/api/auth/callback/email"))!);
  const open = await nextAuth(["callback", "email"], { search: link.search, cookie });
  return { response: open, jar: mergeCookies(cookie, open), location: open.headers.get("location") };
}
