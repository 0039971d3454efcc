/**
 * The proxied campaign: generated requests (valid, boundary and mutated) across every operation of the
 * OpenAPI document, sent through Stoplight Prism's validating proxy to the production build of the app,
 * authenticated as the demo owner, the platform admin, and a studio API token of each scope.
 * Prism checks every request and response against the document and reports what differs in the
 * `sl-violations` header; a response that differs from the document is a contract violation.
 * Requests are generated from the document (openapi-sampler for bodies, the schemas' limits for
 * boundaries) and mutated with a seeded generator.
 *
 *   npx tsx --import ./scripts/server-only-hook.mjs scripts/api-campaign.ts [--requests 5200] [--seed 17] [--concurrency 4] [--timeout-ms 30000]
 *
 * Needs `npm run build` first (uses the build in NEXT_DIST_DIR, default .next). Prints one summary
 * line and exits non-zero when any answer is a 5xx, any request gets no answer, any response violates
 * the document (Prism's log, which has every violation whole, is the count), a truncated violation
 * report shows a response violation, any operation was not exercised, or fewer requests than asked
 * were sent.
 */
import { spawn, type ChildProcess } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import OpenAPISampler from "openapi-sampler";
import { buildOpenApiDocument, errorBodySchema } from "@/lib/api/openapi/document";
import { CRATESLIDE_CATALOGUE_CSV, CRATESLIDE_SETTINGS } from "@/lib/catalogues/demo";
import { CRATESLIDE_SNAPSHOT_JSON } from "@/lib/snapshots/demo";
import { DEMO_ACCOUNTS } from "@/server/seed";
import { puckPairSpec } from "../tests/unit/sweeps/fixtures";

const args = new Map<string, string>();
for (let i = 2; i < process.argv.length; i += 2) args.set(process.argv[i].replace(/^--/, ""), process.argv[i + 1]);
const TARGET_REQUESTS = Number(args.get("requests") ?? 5200);
const SEED = Number(args.get("seed") ?? 17);
const APP_PORT = Number(process.env.KD_CAMPAIGN_PORT ?? 3290);
const PROXY_PORT = APP_PORT + 1;
const MAIL_PORT = Number(process.env.KD_CAMPAIGN_MAIL_PORT ?? 2790);
const STRIPE_PORT = Number(process.env.KD_CAMPAIGN_STRIPE_PORT ?? 12790);
/** Requests in flight at once: the app and Prism each wait on I/O, so a few overlap well on two cores. */
const CONCURRENCY = Number(args.get("concurrency") ?? 4);
/** An answer slower than this counts as none (a hang guard, not a speed check). */
const REQUEST_TIMEOUT_MS = Number(args.get("timeout-ms") ?? 30_000);

/** Prism logs every violation on a line of its own ("Violation: response.body …"), never truncated. */
const prismLog = { responseViolations: 0, samples: [] as string[], kinds: new Set<string>(), partial: "" };
function watchPrismLog(chunk: Buffer): void {
  const lines = (prismLog.partial + chunk.toString()).split("\n");
  prismLog.partial = lines.pop() ?? "";
  for (const line of lines) {
    if (!/Violation: response\b/.test(line)) continue;
    prismLog.responseViolations += 1;
    const text = line.replace(/\x1b\[[0-9;]*m/g, "").trim();
    // One sample per distinct message (numbers and ids masked), up to 10.
    const kind = text.replace(/^.*?Violation:/, "").replace(/[0-9]+/g, "#");
    if (prismLog.samples.length < 10 && !prismLog.kinds.has(kind)) {
      prismLog.kinds.add(kind);
      prismLog.samples.push(text.slice(0, 300));
    }
  }
}

type Json = Record<string, unknown>;
interface Op {
  method: string;
  path: string;
  operationId: string;
  op: Json;
}
interface Auth {
  name: string;
  headers: Record<string, string>;
}

const children: ChildProcess[] = [];
function start(command: string, argv: string[], env: NodeJS.ProcessEnv): ChildProcess {
  // Its own process group, so stopping it stops what npx started under it (the next-server) too.
  const child = spawn(command, argv, { env, stdio: ["ignore", "pipe", "pipe"], detached: true });
  let tail = "";
  const keep = (chunk: Buffer) => (tail = (tail + chunk.toString()).slice(-4000));
  child.stdout?.on("data", keep);
  child.stderr?.on("data", keep);
  child.on("exit", (code) => {
    if (code && code !== 0 && !stopping) console.error(`[campaign] ${command} ${argv[0]} exited ${code}:\n${tail}`);
  });
  children.push(child);
  return child;
}
let stopping = false;
function stopAll(): void {
  stopping = true;
  for (const child of children) {
    if (!child.pid || child.exitCode !== null) continue;
    try {
      process.kill(-child.pid, "SIGTERM");
    } catch {
      child.kill("SIGTERM");
    }
  }
}
process.on("exit", stopAll);
for (const signal of ["SIGINT", "SIGTERM"] as const) process.on(signal, () => process.exit(1));

async function waitFor(url: string, deadlineMs: number): Promise<void> {
  const deadline = Date.now() + deadlineMs;
  for (;;) {
    try {
      const res = await fetch(url);
      if (res.status < 500) return;
    } catch {
      // not listening yet
    }
    if (Date.now() > deadline) throw new Error(`${url} did not answer within ${deadlineMs} ms`);
    await new Promise((resolve) => setTimeout(resolve, 250));
  }
}

function cookiesOf(res: Response, jar: Map<string, string>): void {
  for (const line of res.headers.getSetCookie()) {
    const [pair] = line.split(";");
    const at = pair.indexOf("=");
    jar.set(pair.slice(0, at).trim(), pair.slice(at + 1));
  }
}
const cookieHeader = (jar: Map<string, string>) => [...jar].map(([k, v]) => `${k}=${v}`).join("; ");

async function signIn(base: string, email: string, password: string): Promise<string> {
  const jar = new Map<string, string>();
  const csrfRes = await fetch(`${base}/api/auth/csrf`);
  cookiesOf(csrfRes, jar);
  const { csrfToken } = (await csrfRes.json()) as { csrfToken: string };
  const res = await fetch(`${base}/api/auth/callback/credentials`, {
    method: "POST",
    redirect: "manual",
    headers: { "content-type": "application/x-www-form-urlencoded", cookie: cookieHeader(jar), origin: base },
    body: new URLSearchParams({ csrfToken, email, password, json: "true", callbackUrl: `${base}/studios` }).toString(),
  });
  cookiesOf(res, jar);
  if (![...jar.keys()].some((k) => k.endsWith("next-auth.session-token"))) throw new Error(`sign-in of ${email} failed (${res.status})`);
  return cookieHeader(jar);
}

async function api(base: string, method: string, url: string, headers: Record<string, string>, body?: unknown): Promise<{ status: number; body: unknown }> {
  const init: RequestInit = { method, headers: { ...headers, origin: base } };
  if (body instanceof FormData) init.body = body;
  else if (body !== undefined) {
    init.body = JSON.stringify(body);
    (init.headers as Record<string, string>)["content-type"] = "application/json";
  }
  const res = await fetch(`${base}${url}`, init);
  const text = await res.text();
  let parsed: unknown = text;
  try {
    parsed = JSON.parse(text);
  } catch {
    // CSV or a file
  }
  return { status: res.status, body: parsed };
}

/** One seeded generator, so a campaign is repeatable (mulberry32, a common small PRNG). */
interface Rng {
  nextInt(min: number, max: number): number;
}
function seededRandom(seed: number): Rng {
  let a = seed >>> 0;
  const next = () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  return { nextInt: (min, max) => min + Math.floor(next() * (max - min + 1)) };
}

/** Hostile values for mutations (as in tests/integration/mutated-input.test.ts). */
let deep: unknown = 1;
for (let i = 0; i < 300; i++) deep = { nested: [deep] };
const HOSTILE: unknown[] = ["NaN", "Infinity", "-1", "", -1, 0, -1e308, 1e308, 2 ** 53, 0.5, true, null, [], {}, "x".repeat(3000), deep, "\u0000"];
const BAD_PARAMS = ["-1", "0", "NaN", "1e308", "..%2F..", "%00", "x".repeat(300), "std_doesNotExist000000000", "💥"];

/** Paths into a document, down to a depth that a mutation's targets need (a hostile value may itself be deep). */
function paths(value: unknown, at: (string | number)[] = []): (string | number)[][] {
  const out: (string | number)[][] = [at];
  if (at.length >= 12) return out;
  if (Array.isArray(value)) value.forEach((v, i) => out.push(...paths(v, [...at, i])));
  else if (value && typeof value === "object") for (const [k, v] of Object.entries(value)) out.push(...paths(v, [...at, k]));
  return out;
}
function mutate(valid: unknown, rng: Rng): unknown {
  let doc: unknown = JSON.parse(JSON.stringify(valid ?? {}));
  const steps = 1 + rng.nextInt(0, 2);
  for (let s = 0; s < steps; s++) {
    const all = paths(doc);
    const target = all[rng.nextInt(0, all.length - 1)];
    const value = HOSTILE[rng.nextInt(0, HOSTILE.length - 1)];
    const kind = rng.nextInt(0, 2);
    if (target.length === 0) {
      if (kind === 0) doc = value;
      else if (doc && typeof doc === "object" && !Array.isArray(doc)) Object.defineProperty(doc, ["__proto__", "extra", "constructor"][kind], { value, enumerable: true, configurable: true, writable: true });
      continue;
    }
    const parent = target.slice(0, -1).reduce<unknown>((v, k) => (v as Record<string | number, unknown>)[k], doc) as Record<string | number, unknown>;
    const key = target[target.length - 1];
    if (kind === 0) parent[key] = value;
    else if (kind === 1) {
      if (Array.isArray(parent)) parent.splice(Number(key), 1);
      else delete parent[key];
    } else if (parent && typeof parent === "object" && !Array.isArray(parent)) Object.defineProperty(parent, "__proto__", { value, enumerable: true, configurable: true, writable: true });
  }
  return doc;
}

/** Boundary values of a query parameter's schema: its limits and one past each. */
function boundaries(schema: Json): unknown[] {
  const out: unknown[] = [];
  if (Array.isArray(schema.enum)) out.push(...(schema.enum as unknown[]), "not-a-choice");
  if (typeof schema.minimum === "number") out.push(schema.minimum, (schema.minimum as number) - 1);
  if (typeof schema.maximum === "number") out.push(schema.maximum, (schema.maximum as number) + 1);
  if (typeof schema.maxLength === "number") out.push("y".repeat(schema.maxLength as number), "y".repeat((schema.maxLength as number) + 1));
  if (out.length === 0) out.push("", "x");
  return out;
}

async function main(): Promise<void> {
  const work = mkdtempSync(path.join(tmpdir(), "kickdrift-campaign-"));
  const docFile = path.join(work, "openapi.json");
  const document = buildOpenApiDocument() as unknown as { paths: Record<string, Record<string, Json>> };
  writeFileSync(docFile, JSON.stringify(document));
  const ops: Op[] = Object.entries(document.paths).flatMap(([p, item]) => Object.entries(item).map(([method, op]) => ({ method: method.toUpperCase(), path: p, operationId: String(op.operationId), op })));

  const base = `http://127.0.0.1:${APP_PORT}`;
  const env = Object.fromEntries(Object.entries(process.env).filter(([k]) => !/^(SMTP_URL|STRIPE_|DATABASE_URL|KICKDRIFT_)/.test(k)));
  start("npx", ["next", "start", "-p", String(APP_PORT)], {
    ...env,
    NEXT_DIST_DIR: process.env.NEXT_DIST_DIR ?? ".next",
    KICKDRIFT_DATA_DIR: path.join(work, "data"),
    KICKDRIFT_DEMO: "1",
    KICKDRIFT_RUNNER: "off",
    NEXTAUTH_URL: base,
    MAIL_FAKE_PORT: String(MAIL_PORT),
    STRIPE_FAKE_PORT: String(STRIPE_PORT),
  } as unknown as NodeJS.ProcessEnv);
  await waitFor(`${base}/api/health`, 180_000);
  const prism = start(path.join(process.cwd(), "node_modules", ".bin", "prism"), ["proxy", docFile, base, "-p", String(PROXY_PORT), "-h", "127.0.0.1"], process.env);
  prism.stdout?.on("data", watchPrismLog);
  prism.stderr?.on("data", watchPrismLog);
  const proxy = `http://127.0.0.1:${PROXY_PORT}`;
  await waitFor(`${proxy}/api/health`, 120_000).catch(async () => waitFor(`${proxy}/api/v1/openapi.json`, 60_000));

  // --- Who calls: the demo owner, the platform admin, and a studio token of each scope.
  const owner = DEMO_ACCOUNTS.find((a) => a.role === "owner")!;
  const admin = DEMO_ACCOUNTS.find((a) => a.role === "admin")!;
  const ownerCookie = await signIn(base, owner.email, owner.password);
  const adminCookie = await signIn(base, admin.email, admin.password);
  const me = (await api(base, "GET", "/api/v1/me", { cookie: ownerCookie })).body as { studios: { id: string }[]; user: { id: string } };
  const studioId = me.studios[0].id;
  const S = `/api/v1/studios/${studioId}`;
  const token = async (scopes: string[]) => {
    const created = (await api(base, "POST", `${S}/tokens`, { cookie: ownerCookie }, { name: `campaign ${scopes.join("+")}`, scopes })).body as { token?: { id: string }; secret?: string };
    if (!created.token || !created.secret) throw new Error(`could not create a campaign token of scope ${scopes.join("+")}: ${JSON.stringify(created).slice(0, 200)}`);
    // The token must work, or every "token" request would only exercise the 401 path.
    const check = await api(base, "GET", "/api/v1/token", { authorization: `Bearer ${created.secret}` });
    if (check.status !== 200) throw new Error(`the campaign token of scope ${scopes.join("+")} is refused (${check.status})`);
    return { id: created.token.id, secret: created.secret };
  };
  const readToken = await token(["read"]);
  const writeToken = await token(["write"]);
  const spareToken = await token(["read"]);
  const auths: Auth[] = [
    { name: "owner", headers: { cookie: ownerCookie } },
    { name: "admin", headers: { cookie: adminCookie } },
    { name: "token:read", headers: { authorization: `Bearer ${readToken.secret}` } },
    { name: "token:write", headers: { authorization: `Bearer ${writeToken.secret}` } },
    { name: "anonymous", headers: {} },
  ];

  // --- Real ids for the path parameters.
  const sweep = (await api(base, "POST", `${S}/sweeps`, { cookie: ownerCookie }, { spec: puckPairSpec() })).body as { sweep: { id: string } };
  const catalogueForm = () => {
    const form = new FormData();
    form.set("file", new Blob([CRATESLIDE_CATALOGUE_CSV], { type: "text/csv" }), "objects.csv");
    form.set("name", "Campaign objects");
    return form;
  };
  const snapshotForm = () => {
    const form = new FormData();
    form.set("file", new Blob([CRATESLIDE_SNAPSHOT_JSON], { type: "application/json" }), "bay.json");
    form.set("name", "Campaign bay");
    return form;
  };
  const catalogue = (await api(base, "POST", `${S}/catalogues`, { cookie: ownerCookie }, catalogueForm())).body as { catalogue: { id: string } };
  const snapshot = (await api(base, "POST", `${S}/snapshots`, { cookie: ownerCookie }, snapshotForm())).body as { snapshot: { id: string } };
  const check = (await api(base, "POST", `${S}/catalogues/${catalogue.catalogue.id}/checks`, { cookie: ownerCookie }, { settings: CRATESLIDE_SETTINGS })).body as { check: { id: string } };
  const invite = (await api(base, "POST", `${S}/invites`, { cookie: ownerCookie }, { email: "campaign.invitee@driftwood-pucks.test", role: "engineer" })).body as { invite: { id: string } };
  const ids: Record<string, string> = {
    studioId,
    sweepId: sweep.sweep?.id ?? "swp_missing",
    catalogueId: catalogue.catalogue?.id ?? "cat_missing",
    snapshotId: snapshot.snapshot?.id ?? "snp_missing",
    checkId: check.check?.id ?? "chk_missing",
    inviteId: invite.invite?.id ?? "inv_missing",
    tokenId: spareToken.id,
    userId: me.user.id,
    index: "0",
    invoiceId: "inv_none",
    token: "not-an-invite-secret",
  };

  /** Valid bodies where a sampled one would mean nothing (the rest come from the document's schemas). */
  const curated: Record<string, unknown> = {
    "POST /api/v1/signup": { email: "campaign.signup@driftwood-pucks.test", password: "campaign-long-password", name: "Campaign Person" },
    "POST /api/v1/password-reset": { email: owner.email },
    "POST /api/v1/studios/{studioId}/quotes": { spec: puckPairSpec() },
    "POST /api/v1/studios/{studioId}/sweeps": { spec: puckPairSpec() },
    "POST /api/v1/studios/{studioId}/catalogues/{catalogueId}/quote": { settings: CRATESLIDE_SETTINGS },
    "POST /api/v1/studios/{studioId}/catalogues/{catalogueId}/checks": { settings: CRATESLIDE_SETTINGS },
    "POST /api/v1/studios/{studioId}/billing/checkout": { packId: "tap-out", quantity: 1 },
    "PATCH /api/v1/studios/{studioId}/members/{userId}": { role: "owner" },
    "POST /api/v1/studios/{studioId}/tokens": { name: "campaign", scopes: ["read"] },
    "POST /api/v1/studios/{studioId}/invites": { email: "campaign.more@driftwood-pucks.test", role: "finance" },
  };

  // --- The campaign: every request is generated first (seeded, so a run is repeatable), then sent.
  const rng = seededRandom(SEED);
  interface Planned {
    key: string;
    method: string;
    url: string;
    kind: "valid" | "boundary" | "mutated";
    auth: Auth;
    body: unknown;
    upload: "catalogue" | "snapshot" | null;
  }
  const planned: Planned[] = [];
  const perOp = Math.ceil(TARGET_REQUESTS / ops.length);
  for (const op of ops) {
    const key = `${op.method} ${op.path}`;
    const content = (op.op.requestBody as { content?: Record<string, { schema?: Json }> } | undefined)?.content ?? {};
    const jsonSchema = content["application/json"]?.schema;
    const upload = content["multipart/form-data"] ? (op.path.endsWith("/snapshots") ? "snapshot" : "catalogue") : null;
    let validBody: unknown = curated[key];
    if (validBody === undefined && jsonSchema) validBody = OpenAPISampler.sample(jsonSchema as never, { skipReadOnly: true, quiet: true }, document as never);
    const queryParams = ((op.op.parameters as Json[] | undefined) ?? []).filter((p) => p.in === "query");
    for (let i = 0; i < perOp; i++) {
      const kind = i % 5 === 0 ? "valid" : i % 5 === 1 ? "boundary" : "mutated";
      const auth = auths[i % auths.length];
      let url = op.path.replace(/\{([^}]+)\}/g, (_, name: string) => encodeURIComponent(kind === "mutated" && rng.nextInt(0, 3) === 0 ? BAD_PARAMS[rng.nextInt(0, BAD_PARAMS.length - 1)] : ids[name] ?? name));
      if (kind === "boundary" && queryParams.length > 0) {
        const param = queryParams[rng.nextInt(0, queryParams.length - 1)];
        const values = boundaries((param.schema as Json) ?? {});
        url += `?${encodeURIComponent(String(param.name))}=${encodeURIComponent(String(values[rng.nextInt(0, values.length - 1)]))}`;
      } else if (kind === "mutated" && queryParams.length > 0 && rng.nextInt(0, 1) === 0) {
        const param = queryParams[rng.nextInt(0, queryParams.length - 1)];
        url += `?${encodeURIComponent(String(param.name))}=${encodeURIComponent(String(HOSTILE[rng.nextInt(0, HOSTILE.length - 1)]).slice(0, 500))}`;
      }
      let body: unknown;
      if (jsonSchema) body = kind === "valid" ? validBody : mutate(validBody, rng);
      planned.push({ key, method: op.method, url, kind, auth, body, upload });
    }
  }

  // Requests that end the callers' state go last: a valid DELETE /me/sessions ends every session of the
  // owner (valid requests) or the admin (boundary requests), after which every cookie request of theirs
  // would only meet 401 and no success body would be checked; suspending the studio or removing a member
  // would do the same to the studio's routes. (Array sort is stable: the rest keep their planned order.)
  const endsState = new Set(["DELETE /api/v1/me/sessions", "PUT /api/v1/admin/studios/{studioId}/status", "DELETE /api/v1/studios/{studioId}/members/{userId}"]);
  planned.sort((a, b) => Number(endsState.has(a.key)) - Number(endsState.has(b.key)));

  const stats = { sent: 0, unanswered: 0, fiveXX: 0, headerViolations: 0, truncatedReports: 0, truncatedWithResponse: 0, direct: 0, byKind: { valid: 0, boundary: 0, mutated: 0 } as Record<string, number> };
  const covered = new Set<string>();
  /** Operations with at least one 2xx answer through the proxy: their success bodies were checked against the document. */
  const succeeded = new Set<string>();
  const samples: string[] = [];
  const sampled = new Set<string>();
  /** Keeps the first sample of each distinct problem (`kind`), so one frequent fault does not hide the others. */
  const note = (line: string, kind = line) => {
    if (sampled.has(kind) || samples.length >= 25) return;
    sampled.add(kind);
    samples.push(line);
  };
  /**
   * Prism's forwarder drops a JSON body that parses to a falsy value (0, null, false, "") but forwards the
   * request's Content-Length, so the app waits for a body that never comes and neither answers
   * (@stoplight/prism-http 5.x, forwarder serializeBody's `if (body)`). The app itself answers such bodies
   * at once (400 naming "body"; tests/integration/hostile-paths.test.ts). These requests go straight to the
   * app, and their answers are checked here against the document's own error schema.
   */
  const prismDropsBody = (p: Planned) => p.body !== undefined && !p.body;
  const send = async (p: Planned): Promise<void> => {
    const headers: Record<string, string> = { ...p.auth.headers, origin: base };
    const init: RequestInit = { method: p.method, headers };
    if (p.upload) init.body = p.upload === "snapshot" ? snapshotForm() : catalogueForm();
    else if (p.body !== undefined) {
      init.body = JSON.stringify(p.body);
      headers["content-type"] = "application/json";
    }
    const direct = prismDropsBody(p);
    let res: Response;
    let text: string;
    try {
      res = await fetch(`${direct ? base : proxy}${p.url}`, { ...init, signal: AbortSignal.timeout(REQUEST_TIMEOUT_MS) });
      text = await res.text();
    } catch (error) {
      // No answer at all counts like a 5xx: the client got nothing it could act on.
      stats.sent += 1;
      stats.unanswered += 1;
      note(`no answer within ${REQUEST_TIMEOUT_MS} ms: ${p.method} ${p.url} as ${p.auth.name} body=${JSON.stringify(p.body)?.slice(0, 120)}: ${(error as Error).message}`);
      return;
    }
    stats.sent += 1;
    stats.byKind[p.kind] += 1;
    covered.add(p.key);
    if (stats.sent % 500 === 0) console.log(`[campaign] ${stats.sent}/${planned.length} requests sent`);
    if (res.status >= 500) {
      stats.fiveXX += 1;
      note(`5xx ${res.status} ${p.method} ${p.url} as ${p.auth.name} body=${JSON.stringify(p.body)?.slice(0, 200)}`);
    }
    if (direct) {
      stats.direct += 1;
      let parsed: unknown;
      try {
        parsed = JSON.parse(text);
      } catch {
        parsed = undefined;
      }
      if (res.status < 400 || !errorBodySchema.safeParse(parsed).success) {
        stats.headerViolations += 1;
        note(`contract ${res.status} ${p.method} ${p.url} (body ${JSON.stringify(p.body)}, sent directly): not the document's error shape: ${text.slice(0, 120)}`);
      }
      return;
    }
    if (res.status >= 200 && res.status < 300) succeeded.add(p.key);
    // The header lists the request's and the response's violations; Prism replaces a list longer than
    // 8 KiB with "Too many violations! <its first 8 KiB>". Prism's log has every violation whole, and the
    // count below comes from there; the header gives the samples.
    const reported = res.headers.get("sl-violations");
    if (!reported) return;
    let violations: { location: string[]; message: string }[] = [];
    try {
      violations = JSON.parse(reported) as typeof violations;
    } catch {
      stats.truncatedReports += 1;
      if (reported.includes('"location":["response"')) stats.truncatedWithResponse += 1;
      note(`truncated violation report ${res.status} ${p.method} ${p.url}: ${reported.slice(0, 120)}`);
      return;
    }
    const responseViolations = violations.filter((v) => v.location[0] === "response");
    if (responseViolations.length > 0) {
      stats.headerViolations += 1;
      const found = responseViolations.map((v) => `${v.location.join(".")} ${v.message}`).join("; ");
      note(`contract ${res.status} ${p.method} ${p.url} as ${p.auth.name}: ${found.slice(0, 400)}`, `${p.key} ${res.status} ${found.replace(/[0-9]+/g, "#")}`);
    }
  };

  const started = performance.now();
  let next = 0;
  await Promise.all(
    Array.from({ length: CONCURRENCY }, async () => {
      while (next < planned.length) await send(planned[next++]);
    }),
  );
  const seconds = (performance.now() - started) / 1000;
  // Give Prism a moment to flush its last log lines, then count the response violations it logged.
  await new Promise((resolve) => setTimeout(resolve, 500));
  const loggedResponseViolations = prismLog.responseViolations;
  stopAll();
  rmSync(work, { recursive: true, force: true });
  for (const line of samples) console.log(`[campaign] ${line}`);
  for (const line of prismLog.samples) console.log(`[campaign] prism: ${line}`);
  const contractViolations = Math.max(loggedResponseViolations, stats.headerViolations);
  const neverSucceeded = ops.map((op) => `${op.method.toUpperCase()} ${op.path}`).filter((key) => !succeeded.has(key));
  console.log(`[campaign] success bodies checked on ${succeeded.size}/${ops.length} operations; never answered 2xx: ${neverSucceeded.join(", ") || "none"}`);
  console.log(
    `[campaign] operations covered ${covered.size}/${ops.length}; requests sent ${stats.sent} (valid ${stats.byKind.valid}, boundary ${stats.byKind.boundary}, mutated ${stats.byKind.mutated}; ${stats.direct} with a falsy JSON body sent straight to the app) in ${seconds.toFixed(0)} s, ${CONCURRENCY} at a time, seed ${SEED}; authenticated as ${auths.map((a) => a.name).join(", ")}; 5xx answers ${stats.fiveXX}; unanswered ${stats.unanswered}; contract violations ${contractViolations}; truncated violation reports ${stats.truncatedReports} (with a response violation ${stats.truncatedWithResponse})`,
  );
  const ok =
    covered.size === ops.length &&
    stats.sent >= TARGET_REQUESTS &&
    stats.fiveXX === 0 &&
    stats.unanswered === 0 &&
    contractViolations === 0 &&
    stats.truncatedWithResponse === 0;
  process.exit(ok ? 0 : 1);
}

main().catch((error: unknown) => {
  console.error(error);
  stopAll();
  process.exit(1);
});
