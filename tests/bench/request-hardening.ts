/**
 * Issue 18: the request hardening must cost ordinary requests nothing beyond noise, and one
 * anonymous request must not stall the server. Serves the real route handlers over real HTTP in
 * this process and prints, each from alternating rounds of the variants in the same run (so a
 * machine that gets busier or quieter during the run moves every variant alike):
 *
 * 1. Ordinary requests, hardened vs bare: the health check and a typical authenticated JSON read
 *    (`GET /api/v1/studios/{id}` with a session cookie) through proxy.ts (security headers,
 *    malformed-escape check) and the peer-address stamp, against the same route handler called
 *    directly. The session-row check sits inside the route's guard, so it is in both variants;
 *    its own cost is the next table.
 * 2. The session lookup per request: the cookie's `user_sessions` row joined to its user (now)
 *    against the user read by id alone (the lookup before server-side sessions).
 * 3. The health check while 8 clients (in a worker thread, as an attacker's process would be) keep
 *    sending 8,000-deep nested bodies to sign-up, against the same 8 clients sending an ordinary
 *    body of the same size to the same route (refused by its schema), against idle, and against
 *    the 8 deep clients hitting a copy of the former recursive scan.
 *
 * Each table gives the median of all samples per variant, the ratio to its peer, and the noise:
 * the spread (max − min) of the per-round medians of the same variant, relative to its median.
 * A ratio whose distance from 1 is inside the noise is "no change beyond noise". The range of the
 * per-round ratios (each round's variant against the peer run next to it) is printed beside it.
 * Also prints the body check's cost per kilobyte and a password reset's answer time for a known
 * and an unknown address (the lookup and mail run after the answer).
 */
import { createServer, type IncomingMessage, type ServerResponse } from "node:http";
import type { AddressInfo } from "node:net";
import { Worker } from "node:worker_threads";
import { eq } from "drizzle-orm";
import { NextRequest } from "next/server";
import { getDb } from "@/db/client";
import { users } from "@/db/schema";
import { checkJsonValue } from "@/lib/api/body";
import { settleAfterResponse } from "@/lib/api/after-response";
import { PEER_HEADER } from "@/lib/auth/limiter";
import { resetRateLimits } from "@/lib/auth/rate-limits";
import { startMailFake } from "@/lib/fakes/smtp-fake";
import { decodeSessionCookie, userFromCookieHeader } from "@/lib/auth/session";
import { proxy } from "@/proxy";
import * as healthRoute from "@/app/api/health/route";
import * as signupRoute from "@/app/api/v1/signup/route";
import * as studioRoute from "@/app/api/v1/studios/[studioId]/route";
import * as resetRoute from "@/app/api/v1/password-reset/route";
import { closeTestDb, TEST_BASE_URL, useFreshDb as openFreshTestDb } from "../helpers/db";
import { makeStudio, makeUser, uniqueEmail } from "../helpers/factories";
import { sessionCookie } from "../helpers/http";
import { formatSi, table, type BenchModule } from "./bench-module";

const DEPTH = 8000;
const DEEP_BODY = `{"email":${"[".repeat(DEPTH)}${"]".repeat(DEPTH)}}`;
/** The same size as DEEP_BODY, one level deep: refused by sign-up's schema (email is not a string). */
const ORDINARY_BODY = (() => {
  const items: string[] = [];
  let length = `{"email":[]}`.length;
  while (length + 8 <= DEEP_BODY.length) {
    items.push(`"crate"`);
    length += 8;
  }
  return `{"email":[${items.join(",")}]}`.padEnd(DEEP_BODY.length, " ");
})();

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

/**
 * What Next does around a route handler with this app's proxy.ts: the proxy runs first and either
 * answers itself (a malformed escape) or lets the request through, and its headers are set on the
 * route's answer. API paths get no request-header overrides from the proxy, so none are applied.
 */
async function throughProxy(request: Request, handler: Handler, params: Record<string, string>): Promise<Response> {
  // The proxy reads only the URL and headers; a copy without the body leaves the body to the route.
  const before = proxy(new NextRequest(request.url, { method: request.method, headers: request.headers }));
  if (before.headers.get("x-middleware-next") !== "1") return before;
  const answer = await handler(request, { params: Promise.resolve(params) });
  const headers = new Headers(answer.headers);
  before.headers.forEach((value, name) => {
    if (!name.startsWith("x-middleware-")) headers.set(name, value);
  });
  return new Response(answer.body, { status: answer.status, headers });
}

interface Route {
  pattern: RegExp;
  names: string[];
  handler: Handler;
}

/** `/bare/…` calls the route handler directly; the same path without the prefix goes through the hardening. */
function serve(routes: Route[]): Promise<{ url: string; close(): Promise<void> }> {
  const server = createServer((req: IncomingMessage, res: ServerResponse) => {
    const chunks: Buffer[] = [];
    req.on("data", (c: Buffer) => chunks.push(c));
    req.on("end", async () => {
      const raw = req.url ?? "";
      const bare = raw.startsWith("/bare/");
      const path = bare ? raw.slice("/bare".length) : raw;
      if (!bare) {
        // lib/ops/peer-address.ts's stamp, as the production server applies it to every request.
        const peer = req.socket.remoteAddress;
        if (peer) req.headers[PEER_HEADER] = peer;
      }
      let route: Route | undefined;
      let params: Record<string, string> = {};
      for (const candidate of routes) {
        const match = candidate.pattern.exec(path);
        if (match) {
          route = candidate;
          params = Object.fromEntries(candidate.names.map((name, i) => [name, decodeURIComponent(match[i + 1])]));
          break;
        }
      }
      if (!route) {
        res.writeHead(404).end();
        return;
      }
      try {
        const headers = Object.entries(req.headers).flatMap(([k, v]) => (typeof v === "string" && k !== "content-length" && k !== "connection" ? [[k, v] as [string, string]] : []));
        const request = new Request(`${TEST_BASE_URL}${path}`, { method: req.method, headers, body: req.method === "GET" ? undefined : Buffer.concat(chunks) });
        const answer = bare ? await route.handler(request, { params: Promise.resolve(params) }) : await throughProxy(request, route.handler, params);
        const outHeaders: Record<string, string> = {};
        answer.headers.forEach((value, name) => {
          outHeaders[name] = value;
        });
        res.writeHead(answer.status, outHeaders);
        res.end(Buffer.from(await answer.arrayBuffer()));
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
        close: () =>
          new Promise<void>((done) => {
            server.closeAllConnections();
            server.close(() => done());
          }),
      }),
    ),
  );
}

const sorted = (xs: number[]) => [...xs].sort((a, b) => a - b);
const median = (xs: number[]) => sorted(xs)[Math.floor(xs.length / 2)];
const p95 = (xs: number[]) => sorted(xs)[Math.min(xs.length - 1, Math.floor(xs.length * 0.95))];

/** Samples of one variant, kept per round. */
class Variant {
  readonly rounds: number[][] = [];
  constructor(readonly label: string) {}
  add(samples: number[]) {
    this.rounds.push(samples);
  }
  get all(): number[] {
    return this.rounds.flat();
  }
  get median(): number {
    return median(this.all);
  }
  /** Spread of the per-round medians, relative to the overall median. */
  get noise(): number {
    const medians = this.rounds.map(median);
    return (Math.max(...medians) - Math.min(...medians)) / this.median;
  }
}

const pct = (x: number) => `${(x * 100).toFixed(0)}%`;

/** One row per variant: median, p95, ratio to the peer, noise, and whether the ratio is inside the noise. */
function comparison(title: string, peer: Variant, variants: Variant[], extra: (v: Variant) => string = () => "-"): string {
  const rows: string[][] = [[title, "samples", "median ms", "p95 ms", `ratio to ${peer.label}`, "noise (round spread)", "per-round ratios", "verdict", "notes"]];
  for (const v of [peer, ...variants]) {
    const ratio = v.median / peer.median;
    const noise = Math.max(v.noise, peer.noise);
    // The same round of both variants ran back to back, so their ratio is free of the machine's drift between rounds.
    const paired = v.rounds.map((samples, r) => median(samples) / median(peer.rounds[r]));
    const verdict = v === peer ? "peer" : Math.abs(ratio - 1) <= noise ? "within noise" : ratio > 1 ? "slower beyond noise" : "faster beyond noise";
    rows.push([v.label, String(v.all.length), formatSi(v.median), formatSi(p95(v.all)), formatSi(ratio), `±${pct(v.noise)}`, v === peer ? "-" : `${formatSi(Math.min(...paired))}–${formatSi(Math.max(...paired))}`, verdict, extra(v)]);
  }
  return table(rows);
}

async function timeRequests(url: string, n: number, init: RequestInit = {}, budgetMs = Number.POSITIVE_INFINITY): Promise<number[]> {
  const out: number[] = [];
  const started = performance.now();
  for (let i = 0; i < n; i++) {
    const t = performance.now();
    try {
      await (await fetch(url, init)).arrayBuffer();
    } catch {
      // a reset connection still cost the caller this long
    }
    out.push(performance.now() - t);
    // A stalled server (the former scan) gets a time budget per round; at least 3 samples are kept.
    if (i >= 2 && performance.now() - started > budgetMs) break;
  }
  return out;
}

/** Round r runs the variants in a rotated order, so none is always first after a pause. */
function rotated<T>(items: T[], r: number): T[] {
  return items.map((_, i) => items[(i + r) % items.length]);
}

/**
 * 8 clients in a worker thread, each sending the body again as soon as it is answered, until stopped.
 * The clients' own work runs on another thread, as an attacker's would run in another process.
 */
const CLIENTS_SOURCE = `
const { parentPort, workerData } = require("node:worker_threads");
let running = true;
const statuses = {};
let sent = 0;
parentPort.on("message", () => { running = false; });
const client = async () => {
  while (running) {
    try {
      const res = await fetch(workerData.url, { method: "POST", headers: { "content-type": "application/json" }, body: workerData.body });
      await res.arrayBuffer();
      statuses[res.status] = (statuses[res.status] || 0) + 1;
    } catch {
      statuses[0] = (statuses[0] || 0) + 1;
    }
    sent++;
    if (sent === 8) parentPort.postMessage({ warm: true });
  }
};
Promise.all(Array.from({ length: 8 }, client)).then(() => parentPort.postMessage({ sent, statuses }));
`;

async function withClients<T>(url: string, body: string, during: () => Promise<T>): Promise<{ result: T; sent: number; statuses: Record<string, number> }> {
  const worker = new Worker(CLIENTS_SOURCE, { eval: true, workerData: { url, body } });
  let warm!: () => void;
  const warmed = new Promise<void>((resolve) => (warm = resolve));
  const done = new Promise<{ sent: number; statuses: Record<string, number> }>((resolve, reject) => {
    worker.on("message", (message: { warm?: boolean; sent?: number; statuses?: Record<string, number> }) => {
      if (message.warm) warm();
      else resolve({ sent: message.sent ?? 0, statuses: message.statuses ?? {} });
    });
    worker.on("error", reject);
  });
  // Measure only once the clients are under way (8 bodies answered): a worker thread takes a while to start.
  await warmed;
  const result = await during();
  worker.postMessage("stop");
  const counts = await done;
  await worker.terminate();
  return { result, ...counts };
}

export const requestHardening: BenchModule = {
  id: "request-hardening",
  title: "hardened vs bare: health and an authenticated read; session lookup; health under 8 deep-body clients; body check per KiB; reset answer time",
  async run() {
    await openFreshTestDb();
    // The reset mails sent after the answer go to the local mail fake on a free port, as in the tests.
    const mail = await startMailFake({ port: 0 });
    const owner = await makeUser({ email: uniqueEmail("bench-owner") });
    const studioId = await makeStudio("Bench Harbour Games", [{ user: owner, role: "owner" }]);
    const cookie = await sessionCookie(owner);
    const app = await serve([
      { pattern: /^\/api\/health$/, names: [], handler: healthRoute.GET as Handler },
      { pattern: /^\/api\/v1\/signup$/, names: [], handler: signupRoute.POST as Handler },
      { pattern: /^\/api\/v1\/studios\/([^/]+)$/, names: ["studioId"], handler: studioRoute.GET as Handler },
      { pattern: /^\/former\/signup$/, names: [], handler: formerSignup },
    ]);
    const ROUNDS = 6;
    const N = 30;

    // Both variants must answer what a user expects before they are timed.
    for (const prefix of ["", "/bare"]) {
      const health = await fetch(`${app.url}${prefix}/api/health`);
      const read = await fetch(`${app.url}${prefix}/api/v1/studios/${studioId}`, { headers: { cookie } });
      await health.arrayBuffer();
      const body = (await read.json()) as { studio?: { id?: string } };
      if (health.status !== 200 || read.status !== 200 || body.studio?.id !== studioId) throw new Error(`bench setup: ${prefix || "hardened"} answered ${health.status}/${read.status}`);
      if (!prefix && read.headers.get("x-content-type-options") !== "nosniff") throw new Error("bench setup: the hardened variant carries no security headers");
    }

    // 1. Ordinary requests, hardened vs bare, alternating rounds.
    const hardenedHealth = new Variant("hardened");
    const bareHealth = new Variant("bare");
    const hardenedRead = new Variant("hardened");
    const bareRead = new Variant("bare");
    const readInit = { headers: { cookie } };
    await timeRequests(`${app.url}/api/health`, 20);
    await timeRequests(`${app.url}/bare/api/v1/studios/${studioId}`, 20, readInit);
    for (let r = 0; r < ROUNDS; r++) {
      const steps: [Variant, string, RequestInit][] = [
        [hardenedHealth, "/api/health", {}],
        [bareHealth, "/bare/api/health", {}],
        [hardenedRead, `/api/v1/studios/${studioId}`, readInit],
        [bareRead, `/bare/api/v1/studios/${studioId}`, readInit],
      ];
      for (const [variant, path, init] of rotated(steps, r)) variant.add(await timeRequests(`${app.url}${path}`, N, init));
    }
    console.log(comparison("GET /api/health", bareHealth, [hardenedHealth]));
    console.log(comparison("GET /api/v1/studios/{id} (session cookie)", bareRead, [hardenedRead]));
    console.log("hardened = proxy.ts (security headers, malformed-escape 404) + peer-address stamp; bare = the same route handler called directly.");
    console.log("target: hardened within noise of bare.\n");

    // 2. The session lookup itself: user_sessions row joined to its user, vs the user by id alone.
    const sessionNow = new Variant("session row + user");
    const sessionFormer = new Variant("user by id (former)");
    const formerLookup = async (header: string) => {
      const decoded = await decodeSessionCookie(header);
      if (!decoded) return null;
      const [user] = await (await getDb()).select().from(users).where(eq(users.id, decoded.userId));
      return user ?? null;
    };
    const timeLookups = async (lookup: (header: string) => Promise<unknown>) => {
      const out: number[] = [];
      for (let i = 0; i < N * 2; i++) {
        const t = performance.now();
        if (!(await lookup(cookie))) throw new Error("bench setup: the session cookie resolves to nobody");
        out.push(performance.now() - t);
      }
      return out;
    };
    await timeLookups(userFromCookieHeader);
    await timeLookups(formerLookup);
    for (let r = 0; r < ROUNDS; r++) {
      const steps: [Variant, (header: string) => Promise<unknown>][] = [
        [sessionNow, userFromCookieHeader],
        [sessionFormer, formerLookup],
      ];
      for (const [variant, lookup] of rotated(steps, r)) variant.add(await timeLookups(lookup));
    }
    console.log(comparison("session lookup per request (in process)", sessionFormer, [sessionNow]));
    console.log("target: within noise, or a small fraction of the authenticated read above.\n");

    // 3. Health while 8 clients send 8,000-deep bodies, against the same clients sending an ordinary body.
    const idle = new Variant("idle");
    const ordinary = new Variant("8 ordinary-body clients");
    const deep = new Variant("8 deep-body clients");
    const former = new Variant("8 deep-body clients, former scan");
    const answered = new Map<Variant, { sent: number; statuses: Record<string, number> }>();
    const tally = (variant: Variant, counts: { sent: number; statuses: Record<string, number> }) => {
      const seen = answered.get(variant) ?? { sent: 0, statuses: {} };
      seen.sent += counts.sent;
      for (const [status, count] of Object.entries(counts.statuses)) seen.statuses[status] = (seen.statuses[status] ?? 0) + count;
      answered.set(variant, seen);
    };
    const HEALTH_ROUNDS = 3;
    // Each loaded round is bounded in time (at least 3 samples): the former scan stalls the server for seconds.
    const LOADED_BUDGET_MS = 4000;
    const health = `${app.url}/api/health`;
    for (let r = 0; r < HEALTH_ROUNDS; r++) {
      const steps: [Variant, () => Promise<void>][] = [
        [idle, async () => idle.add(await timeRequests(health, N))],
        [
          ordinary,
          async () => {
            const run = await withClients(`${app.url}/api/v1/signup`, ORDINARY_BODY, () => timeRequests(health, N, {}, LOADED_BUDGET_MS));
            ordinary.add(run.result);
            tally(ordinary, run);
          },
        ],
        [
          deep,
          async () => {
            const run = await withClients(`${app.url}/api/v1/signup`, DEEP_BODY, () => timeRequests(health, N, {}, LOADED_BUDGET_MS));
            deep.add(run.result);
            tally(deep, run);
          },
        ],
        [
          former,
          async () => {
            const run = await withClients(`${app.url}/former/signup`, DEEP_BODY, () => timeRequests(health, N, {}, LOADED_BUDGET_MS));
            former.add(run.result);
            tally(former, run);
          },
        ],
      ];
      for (const [, step] of rotated(steps, r)) await step();
    }
    const answers = (v: Variant) => {
      const seen = answered.get(v);
      if (!seen) return "-";
      return `${seen.sent} bodies answered (${Object.entries(seen.statuses)
        .map(([status, count]) => `${count}× ${status === "0" ? "reset" : status}`)
        .join(", ")})`;
    };
    console.log(comparison("GET /api/health while …", ordinary, [deep, idle, former], answers));
    console.log(`bodies: ${formatSi(DEEP_BODY.length / 1024)} KiB each; the ordinary body is a flat array of the same size, refused by sign-up's schema (400).`);
    console.log("target: the deep-body clients within noise of the ordinary-body clients (a deep body costs the server no more than any body of its size).\n");
    await app.close();

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
    console.log("target: well under 1 ms per KiB.\n");

    // A reset's answer time, known vs unknown address (the work after the answer is not in it).
    const known = await makeUser({ email: uniqueEmail("bench-known") });
    const time = async (email: string) => {
      resetRateLimits();
      const started = performance.now();
      await resetRoute.POST(new Request(`${TEST_BASE_URL}/api/v1/password-reset`, { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify({ email }) }), { params: Promise.resolve({}) });
      const ms = performance.now() - started;
      await settleAfterResponse();
      return ms;
    };
    const knownReset = new Variant("known address");
    const unknownReset = new Variant("unknown address");
    for (let r = 0; r < 5; r++) {
      const k: number[] = [];
      const u: number[] = [];
      for (let i = 0; i < 6; i++) {
        if ((i + r) % 2 === 0) {
          k.push(await time(known.email));
          u.push(await time(uniqueEmail("bench-unknown")));
        } else {
          u.push(await time(uniqueEmail("bench-unknown")));
          k.push(await time(known.email));
        }
      }
      knownReset.add(k);
      unknownReset.add(u);
    }
    console.log(comparison("password reset answer", unknownReset, [knownReset]));
    console.log("target: within noise (the answer does not depend on whether the address has an account).");
    await mail.close();
    await closeTestDb();
  },
};
