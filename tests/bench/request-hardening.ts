/**
 * Issue 18: one anonymous request must not stall the server. Serves the health route and the
 * sign-up route over real HTTP in this process, and prints the health check's latency idle and
 * while 8 clients keep sending 8,000-deep nested bodies to sign-up; the peer in the same run is
 * the same load against a copy of the former recursive scan (path copied at every level).
 * Also prints the body check's cost per kilobyte, and a password reset's answer time for a known
 * and an unknown address (the lookup and mail now run after the answer).
 */
import { createServer, type IncomingMessage, type ServerResponse } from "node:http";
import type { AddressInfo } from "node:net";
import { checkJsonValue } from "@/lib/api/body";
import { settleAfterResponse } from "@/lib/api/after-response";
import { resetRateLimits } from "@/lib/auth/rate-limits";
import * as healthRoute from "@/app/api/health/route";
import * as signupRoute from "@/app/api/v1/signup/route";
import * as resetRoute from "@/app/api/v1/password-reset/route";
import { closeTestDb, useFreshDb as openFreshTestDb } from "../helpers/db";
import { makeUser, uniqueEmail } from "../helpers/factories";
import { formatSi, table, type BenchModule } from "./bench-module";

const DEPTH = 8000;
const DEEP_BODY = `{"email":${"[".repeat(DEPTH)}${"]".repeat(DEPTH)}}`;

/** The scan lib/api/body.ts used before issue 18, kept here only as the peer of this benchmark. */
function formerFindNul(value: unknown, path: string[] = []): string[] | null {
  if (typeof value === "string") return value.includes("\u0000") ? path : null;
  if (Array.isArray(value)) {
    for (let i = 0; i < value.length; i++) {
      const found = formerFindNul(value[i], [...path, String(i)]);
      if (found) return found;
    }
    return null;
  }
  if (value && typeof value === "object") {
    for (const [key, inner] of Object.entries(value)) {
      const found = formerFindNul(inner, [...path, key]);
      if (found) return found;
    }
  }
  return null;
}

type Handler = (req: Request, ctx: { params: Promise<Record<string, string>> }) => Promise<Response>;

async function formerSignup(req: Request): Promise<Response> {
  const text = await req.text();
  try {
    formerFindNul(JSON.parse(text));
  } catch {
    // a stack overflow in the former scan answered 500
    return new Response("{}", { status: 500 });
  }
  return new Response("{}", { status: 400 });
}

function serve(routes: Record<string, Handler>): Promise<{ url: string; close(): Promise<void> }> {
  const server = createServer((req: IncomingMessage, res: ServerResponse) => {
    const chunks: Buffer[] = [];
    req.on("data", (c: Buffer) => chunks.push(c));
    req.on("end", async () => {
      const handler = routes[req.url ?? ""];
      if (!handler) {
        res.writeHead(404).end();
        return;
      }
      try {
        const headers = Object.entries(req.headers).flatMap(([k, v]) => (typeof v === "string" && k !== "content-length" && k !== "connection" ? [[k, v] as [string, string]] : []));
        const request = new Request(`http://localhost:3000${req.url}`, { method: req.method, headers, body: req.method === "GET" ? undefined : Buffer.concat(chunks) });
        const answer = await handler(request, { params: Promise.resolve({}) });
        res.writeHead(answer.status, { "content-type": "application/json" });
        res.end(await answer.text());
      } catch (error) {
        res.writeHead(500).end(String(error));
      }
    });
  });
  // A blocked event loop must not also expire kept-alive sockets under the clients (that would read as resets).
  server.keepAliveTimeout = 120_000;
  return new Promise((resolve) =>
    server.listen(0, "127.0.0.1", () =>
      resolve({
        url: `http://127.0.0.1:${(server.address() as AddressInfo).port}`,
        close: () => new Promise<void>((done) => server.close(() => done())),
      }),
    ),
  );
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
const p95 = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length * 0.95)];

async function healthLatencies(url: string, n: number): Promise<number[]> {
  const out: number[] = [];
  for (let i = 0; i < n; i++) {
    const started = performance.now();
    try {
      await (await fetch(`${url}/api/health`)).text();
    } catch {
      // a reset connection still cost the caller this long
    }
    out.push(performance.now() - started);
  }
  return out;
}

async function underLoad(url: string, path: string, n: number): Promise<{ health: number[]; deepSent: number; statuses: Set<number> }> {
  let running = true;
  let deepSent = 0;
  const statuses = new Set<number>();
  const clients = Array.from({ length: 8 }, async () => {
    while (running) {
      try {
        const res = await fetch(`${url}${path}`, { method: "POST", headers: { "content-type": "application/json" }, body: DEEP_BODY });
        statuses.add(res.status);
        await res.text();
      } catch {
        statuses.add(0);
      }
      deepSent++;
    }
  });
  await new Promise((r) => setTimeout(r, 50));
  const health = await healthLatencies(url, n);
  running = false;
  await Promise.all(clients);
  return { health, deepSent, statuses };
}

export const requestHardening: BenchModule = {
  id: "request-hardening",
  title: "health latency while 8 clients send 8,000-deep bodies; body check per KiB; reset answer time known vs unknown",
  async run() {
    await openFreshTestDb();
    const app = await serve({ "/api/health": healthRoute.GET as Handler, "/api/v1/signup": signupRoute.POST as Handler, "/former/signup": formerSignup });
    const N = 60;
    await healthLatencies(app.url, 10);
    const idle = await healthLatencies(app.url, N);
    const now = await underLoad(app.url, "/api/v1/signup", N);
    const former = await underLoad(app.url, "/former/signup", N);
    await app.close();
    const row = (label: string, xs: number[], extra: string) => [label, formatSi(median(xs)), formatSi(p95(xs)), formatSi(median(xs) / median(idle)), extra];
    console.log(
      table([
        ["health check", "median ms", "p95 ms", "median / idle", "deep requests answered"],
        row("idle", idle, "-"),
        row("8 deep clients, iterative check", now.health, `${now.deepSent} (status ${[...now.statuses].join(",")})`),
        row("8 deep clients, former recursive scan", former.health, `${former.deepSent} (status ${[...former.statuses].join(",")})`),
      ]),
    );
    console.log("target: the iterative check's median within noise of idle (ratio near 1).");

    // Cost of the check itself per KiB of body: parse + scan, best of 20.
    const kib = Buffer.byteLength(DEEP_BODY) / 1024;
    let best = Number.POSITIVE_INFINITY;
    for (let i = 0; i < 20; i++) {
      const started = performance.now();
      try {
        checkJsonValue(JSON.parse(DEEP_BODY));
      } catch {
        // refused, as intended
      }
      best = Math.min(best, performance.now() - started);
    }
    const flat = JSON.stringify({ items: Array.from({ length: 4000 }, (_, i) => ({ name: `crate ${i}`, mass: i })) });
    let bestFlat = Number.POSITIVE_INFINITY;
    for (let i = 0; i < 20; i++) {
      const started = performance.now();
      checkJsonValue(JSON.parse(flat));
      bestFlat = Math.min(bestFlat, performance.now() - started);
    }
    console.log(
      table([
        ["body", "KiB", "parse+check ms", "ms per KiB"],
        [`${DEPTH}-deep arrays (refused)`, formatSi(kib), formatSi(best), formatSi(best / kib)],
        ["4,000 flat objects (accepted)", formatSi(Buffer.byteLength(flat) / 1024), formatSi(bestFlat), formatSi(bestFlat / (Buffer.byteLength(flat) / 1024))],
      ]),
    );
    console.log("target: well under 1 ms per KiB.");

    // A reset's answer time, known vs unknown address (the work after the answer is not in it).
    const known = await makeUser({ email: uniqueEmail("bench-known") });
    const time = async (email: string) => {
      resetRateLimits();
      const started = performance.now();
      await resetRoute.POST(new Request("http://localhost:3000/api/v1/password-reset", { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify({ email }) }), { params: Promise.resolve({}) });
      const ms = performance.now() - started;
      await settleAfterResponse();
      return ms;
    };
    const knownMs: number[] = [];
    const unknownMs: number[] = [];
    for (let i = 0; i < 15; i++) {
      knownMs.push(await time(known.email));
      unknownMs.push(await time(uniqueEmail("bench-unknown")));
    }
    console.log(
      table([
        ["password reset answer", "median ms", "p95 ms"],
        ["known address", formatSi(median(knownMs)), formatSi(p95(knownMs))],
        ["unknown address", formatSi(median(unknownMs)), formatSi(p95(unknownMs))],
        ["ratio known / unknown", formatSi(median(knownMs) / median(unknownMs)), "-"],
      ]),
    );
    await closeTestDb();
  },
};
