import { readdirSync, statSync } from "node:fs";
import path from "node:path";
import { HTTP_METHODS, type HttpMethod } from "@/lib/api/methods";
import type { RoutePolicy } from "@/lib/auth/guard";

export const API_DIR = path.join(process.cwd(), "app", "api");

/** Route folders under app/api that are not guarded by a policy, and why. */
export const UNGUARDED_ROUTES: Readonly<Record<string, string>> = {
  "auth/[...nextauth]": "next-auth's own endpoints (sign-in, callback, csrf, session, sign-out)",
  "[...path]": "the catch-all that answers 404 JSON for unknown /api paths",
};

/** Every folder under app/api holding a route.ts, as Next names it (e.g. "v1/studios/[studioId]"). */
export function routeFolders(dir = API_DIR): string[] {
  const found: string[] = [];
  for (const entry of readdirSync(dir)) {
    const full = path.join(dir, entry);
    if (statSync(full).isDirectory()) found.push(...routeFolders(full));
    else if (entry === "route.ts") found.push(path.relative(API_DIR, dir).split(path.sep).join("/"));
  }
  return found.sort();
}

export async function loadRoute(route: string): Promise<Record<string, unknown>> {
  return (await import(/* @vite-ignore */ path.join(API_DIR, route, "route.ts"))) as Record<string, unknown>;
}

/** The policy `withAuth` attached to each exported handler, for every guarded route method. */
export async function routePolicies(): Promise<{ route: string; method: HttpMethod; policy: RoutePolicy }[]> {
  const out: { route: string; method: HttpMethod; policy: RoutePolicy }[] = [];
  for (const route of routeFolders()) {
    if (route in UNGUARDED_ROUTES) continue;
    const mod = await loadRoute(route);
    for (const method of HTTP_METHODS) {
      const policy = (mod[method] as { policy?: RoutePolicy } | undefined)?.policy;
      if (policy) out.push({ route, method, policy });
    }
  }
  return out;
}

/** A concrete URL path for a route folder, filling [param] segments. */
export function concretePath(route: string, params: Record<string, string>): string {
  return `/api/${route.replace(/\[([^\]]+)\]/g, (_, name: string) => encodeURIComponent(params[name] ?? name))}`;
}
