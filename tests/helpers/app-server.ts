/**
 * The app's API as a real HTTP server in the test process: every route handler under app/api,
 * matched by its folder the way Next matches it ([param] segments, the [...path] catch-all last),
 * called with a real Request. For clients that must speak HTTP (the command-line client); the
 * database and queue runner are the test file's own.
 */
import { createServer, type IncomingMessage, type Server, type ServerResponse } from "node:http";
import type { AddressInfo } from "node:net";
import { Readable } from "node:stream";
import { loadRoute, routeFolders } from "./routes";

interface CompiledRoute {
  route: string;
  pattern: RegExp;
  names: string[];
  catchAll: boolean;
  dynamicSegments: number;
}

function compile(route: string): CompiledRoute {
  const names: string[] = [];
  let catchAll = false;
  const parts = route.split("/").map((segment) => {
    const rest = /^\[\.\.\.(\w+)\]$/.exec(segment);
    if (rest) {
      names.push(rest[1]);
      catchAll = true;
      return "(.+)";
    }
    const param = /^\[(\w+)\]$/.exec(segment);
    if (param) {
      names.push(param[1]);
      return "([^/]+)";
    }
    return segment.replace(/[.*+?^${}()|[\]\\]/g, "\\$&");
  });
  return { route, pattern: new RegExp(`^/api/${parts.join("/")}/?$`), names, catchAll, dynamicSegments: names.length };
}

export interface AppServer {
  url: string;
  server: Server;
  /** Stops accepting and drops open connections: the app is gone. */
  stop(): Promise<void>;
}

export async function startAppServer(port = 0): Promise<AppServer> {
  const routes = routeFolders()
    .map(compile)
    .sort((a, b) => Number(a.catchAll) - Number(b.catchAll) || a.dynamicSegments - b.dynamicSegments);
  const modules = new Map<string, Record<string, unknown>>();
  for (const route of routes) modules.set(route.route, await loadRoute(route.route));

  const handle = async (req: IncomingMessage, res: ServerResponse) => {
    const url = new URL(req.url ?? "/", "http://localhost");
    const match = routes.map((route) => ({ route, found: route.pattern.exec(url.pathname) })).find((entry) => entry.found);
    if (!match?.found) {
      res.writeHead(404, { "content-type": "application/json" }).end(JSON.stringify({ error: { code: "not_found", message: "No such route." } }));
      return;
    }
    const params: Record<string, string | string[]> = {};
    match.route.names.forEach((name, i) => {
      const raw = match.found?.[i + 1] ?? "";
      params[name] = match.route.catchAll && i === match.route.names.length - 1 ? raw.split("/").map(decodeURIComponent) : decodeURIComponent(raw);
    });
    const method = req.method ?? "GET";
    const handler = modules.get(match.route.route)?.[method] as ((r: Request, c: { params: Promise<typeof params> }) => Promise<Response>) | undefined;
    if (!handler) {
      res.writeHead(405).end();
      return;
    }
    const chunks: Buffer[] = [];
    for await (const chunk of req) chunks.push(chunk as Buffer);
    const headers = new Headers();
    for (const [name, value] of Object.entries(req.headers)) if (value !== undefined) headers.set(name, Array.isArray(value) ? value.join(", ") : value);
    const body = method === "GET" || method === "HEAD" || chunks.length === 0 ? undefined : Buffer.concat(chunks);
    const request = new Request(new URL(url.pathname + url.search, `http://${req.headers.host ?? "localhost"}`), { method, headers, body });
    const response = await handler(request, { params: Promise.resolve(params) });
    const outHeaders: Record<string, string | string[]> = {};
    response.headers.forEach((value, name) => {
      if (name !== "set-cookie") outHeaders[name] = value;
    });
    const cookies = response.headers.getSetCookie();
    if (cookies.length) outHeaders["set-cookie"] = cookies;
    res.writeHead(response.status, outHeaders);
    if (!response.body) {
      res.end();
      return;
    }
    Readable.fromWeb(response.body as import("node:stream/web").ReadableStream).pipe(res);
  };

  const server = createServer((req, res) => {
    handle(req, res).catch((error: unknown) => {
      if (!res.headersSent) res.writeHead(500, { "content-type": "application/json" });
      res.end(JSON.stringify({ error: { code: "internal", message: String(error) } }));
    });
  });
  await new Promise<void>((resolve) => server.listen(port, "127.0.0.1", resolve));
  const address = server.address() as AddressInfo;
  return {
    url: `http://127.0.0.1:${address.port}`,
    server,
    stop: () =>
      new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      }),
  };
}
