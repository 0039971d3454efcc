import { encode } from "next-auth/jwt";
import type { User } from "@/db/schema";
import { openSession } from "@/lib/auth/user-sessions";
import { TEST_AUTH_SECRET, TEST_BASE_URL } from "./db";

export type RouteHandler = (req: Request, context: { params: Promise<Record<string, string | string[]>> }) => Promise<Response>;

export interface CallOptions {
  method?: string;
  path: string;
  params?: Record<string, string | string[]>;
  /** Serialised as JSON unless it is already a string or FormData (sent as multipart/form-data). */
  body?: unknown;
  cookie?: string;
  bearer?: string;
  headers?: Record<string, string>;
}

export function buildRequest(options: CallOptions): Request {
  const headers = new Headers(options.headers);
  if (options.cookie) headers.set("cookie", options.cookie);
  if (options.bearer) headers.set("authorization", `Bearer ${options.bearer}`);
  // A browser sends Origin with every fetch that is not GET/HEAD; our own pages send ours.
  const method = (options.method ?? "GET").toUpperCase();
  if (method !== "GET" && method !== "HEAD" && !headers.has("origin")) headers.set("origin", TEST_BASE_URL);
  let body: string | FormData | undefined;
  if (options.body instanceof FormData) {
    body = options.body;
  } else if (options.body !== undefined) {
    body = typeof options.body === "string" ? options.body : JSON.stringify(options.body);
    if (!headers.has("content-type")) headers.set("content-type", "application/json");
  }
  return new Request(new URL(options.path, TEST_BASE_URL), { method: options.method ?? "GET", headers, body });
}

/** Calls a route handler the way Next does: a real Request and the params as a Promise. */
export async function call(handler: unknown, options: CallOptions): Promise<{ status: number; body: unknown; res: Response }> {
  const res = await (handler as RouteHandler)(buildRequest(options), { params: Promise.resolve(options.params ?? {}) });
  const text = await res.text();
  let body: unknown = text;
  try {
    body = text ? JSON.parse(text) : undefined;
  } catch {
    // non-JSON answers (next-auth HTML pages) stay as text
  }
  return { status: res.status, body, res };
}

/** A next-auth session cookie for the user, as next-auth itself would mint it after sign-in. */
export async function sessionCookie(user: Pick<User, "id" | "email" | "name">): Promise<string> {
  const sid = await openSession(user.id);
  const value = await encode({
    token: { sub: user.id, id: user.id, sid, email: user.email, name: user.name },
    secret: TEST_AUTH_SECRET,
  });
  return `next-auth.session-token=${value}`;
}

/** Collects Set-Cookie headers into a Cookie header value (name=value pairs), keeping earlier cookies. */
export function mergeCookies(existing: string, res: Response): string {
  const jar = new Map<string, string>();
  for (const part of existing.split(";")) {
    const [name, ...rest] = part.trim().split("=");
    if (name) jar.set(name, rest.join("="));
  }
  for (const header of res.headers.getSetCookie()) {
    const [pair] = header.split(";");
    const [name, ...rest] = pair.split("=");
    jar.set(name.trim(), rest.join("="));
  }
  return [...jar].map(([n, v]) => `${n}=${v}`).join("; ");
}

export function errorOf(body: unknown): { code: string; message: string; field?: string; issues?: { field: string; message: string }[] } {
  return (body as { error: { code: string; message: string; field?: string } }).error;
}
