import { readFileSync, readdirSync, statSync } from "node:fs";
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

/**
 * Exported HTTP method handlers of a route module that carry no policy and are not the 405 stubs
 * of `otherMethods`: each one is a handler that skipped `withAuth`.
 */
export function unguardedHandlers(mod: Record<string, unknown>): string[] {
  return [...HTTP_METHODS, "HEAD" as const].filter((method) => {
    const handler = mod[method] as ({ policy?: unknown; methodNotAllowed?: true } & ((...args: unknown[]) => unknown)) | undefined;
    return typeof handler === "function" && !handler.policy && !handler.methodNotAllowed;
  });
}

const SOURCE_ROOTS = ["app", "components", "lib"].map((dir) => path.join(process.cwd(), dir));
const USE_SERVER = /^\s*["']use server["'];?\s*$/m;

/** Source files under app/, components/ and lib/ that declare server actions ("use server"). */
export function serverActionFiles(roots: readonly string[] = SOURCE_ROOTS): string[] {
  const found: string[] = [];
  const walk = (dir: string) => {
    for (const entry of readdirSync(dir)) {
      const full = path.join(dir, entry);
      if (statSync(full).isDirectory()) {
        if (entry !== "node_modules" && !entry.startsWith(".")) walk(full);
      } else if (/\.(ts|tsx)$/.test(entry) && USE_SERVER.test(readFileSync(full, "utf8"))) found.push(full);
    }
  };
  for (const root of roots) walk(root);
  return found.sort();
}

/** Exported functions of a server-action module that carry no policy (every action must be guarded like a route). */
export function unguardedActions(mod: Record<string, unknown>): string[] {
  return Object.entries(mod)
    .filter(([, value]) => typeof value === "function" && !(value as { policy?: unknown }).policy)
    .map(([name]) => name);
}

/** A concrete URL path for a route folder, filling [param] segments. */
export function concretePath(route: string, params: Record<string, string>): string {
  return `/api/${route.replace(/\[([^\]]+)\]/g, (_, name: string) => encodeURIComponent(params[name] ?? name))}`;
}
