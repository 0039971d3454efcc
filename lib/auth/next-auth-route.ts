import "server-only";
import NextAuth from "next-auth";
import type { NextApiRequest, NextApiResponse } from "next";
import { ApiError } from "@/lib/errors";
import { readBodyText } from "@/lib/api/body";
import { toErrorResponse } from "@/lib/api/respond";
import { authOptions } from "./options";
import { appBaseUrl } from "./config";
import { clientAddress } from "./limiter";
import { consumeRateLimit } from "./rate-limits";
import { parseCookieHeader } from "./session";

/**
 * Runs next-auth 4 on a Web Request without Next's request context (`next/headers`), so the same
 * handler works under `next start` and when a test calls it directly. It feeds next-auth's
 * documented `NextAuth(req, res, options)` form a request/response pair built from the Request.
 */
export async function handleNextAuth(req: Request, segments: string[]): Promise<Response> {
  try {
    return await runNextAuth(req, segments);
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Sign-in forms are a few hundred bytes; anything past this is refused before next-auth sees it. */
const MAX_AUTH_BODY_BYTES = 16 * 1024;

async function runNextAuth(req: Request, segments: string[]): Promise<Response> {
  const url = new URL(req.url);
  const query: Record<string, string | string[]> = Object.fromEntries(url.searchParams);
  query.nextauth = segments;
  let body: Record<string, string> | undefined;
  if (req.method === "POST") {
    const type = req.headers.get("content-type") ?? "";
    const text = await readBodyText(req, MAX_AUTH_BODY_BYTES);
    if (type.includes("application/json")) {
      let parsed: unknown;
      try {
        parsed = text ? JSON.parse(text) : {};
      } catch {
        throw new ApiError("invalid_json", "Request body is not valid JSON.");
      }
      if (!parsed || typeof parsed !== "object" || Array.isArray(parsed))
        throw new ApiError("invalid_json", "Request body must be a JSON object.");
      body = Object.fromEntries(Object.entries(parsed).map(([k, v]) => [k, String(v)]));
    } else body = Object.fromEntries(new URLSearchParams(text));
  }
  // Sign-in links are mail: limited per address and per client address before next-auth sends one.
  if (req.method === "POST" && segments[0] === "signin" && segments[1] === "email") {
    const email = (body?.email ?? "").trim().toLowerCase();
    try {
      await consumeRateLimit("magicLinkPerAddress", clientAddress(req.headers));
      if (email) await consumeRateLimit("magicLinkPerEmail", email, "email");
    } catch (error) {
      if (!(error instanceof ApiError)) throw error;
      // next-auth's client reads `url` and its `error` parameter; our JSON error rides along.
      return new Response(JSON.stringify({ url: `${appBaseUrl()}/signin?error=TooManyRequests`, error: { code: error.code, message: error.message, field: error.field } }), {
        status: error.status,
        headers: { "content-type": "application/json", "cache-control": "no-store", ...error.headers },
      });
    }
  }
  const headers: Record<string, string> = Object.fromEntries(req.headers);
  const apiReq = {
    method: req.method,
    query,
    body,
    headers,
    cookies: parseCookieHeader(req.headers.get("cookie")),
  };

  const out = { status: 200, headers: new Headers(), body: undefined as unknown, setCookies: [] as string[] };
  const apiRes = {
    status(code: number) {
      out.status = code;
      return apiRes;
    },
    getHeader(name: string) {
      return name.toLowerCase() === "set-cookie" ? out.setCookies : (out.headers.get(name) ?? undefined);
    },
    setHeader(name: string, value: string | string[]) {
      if (name.toLowerCase() === "set-cookie") out.setCookies = Array.isArray(value) ? value : [value];
      else out.headers.set(name, Array.isArray(value) ? value.join(", ") : value);
      return apiRes;
    },
    json(value: unknown) {
      out.headers.set("content-type", "application/json");
      out.body = JSON.stringify(value);
      return apiRes;
    },
    send(value: unknown) {
      if (typeof value === "string" || value === undefined) out.body = value;
      else {
        out.headers.set("content-type", "application/json");
        out.body = JSON.stringify(value);
      }
      return apiRes;
    },
    end() {
      return apiRes;
    },
  };

  await NextAuth(apiReq as unknown as NextApiRequest, apiRes as unknown as NextApiResponse, authOptions);
  for (const cookie of out.setCookies) out.headers.append("set-cookie", cookie);
  out.headers.set("cache-control", "no-store");
  const status = out.status;
  const nullBody = status === 204 || status === 304 || (status >= 300 && status < 400 && out.body === undefined);
  return new Response(nullBody ? null : ((out.body as string | undefined) ?? ""), { status, headers: out.headers });
}
