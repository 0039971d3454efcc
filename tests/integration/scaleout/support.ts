/**
 * Shared set-up for the scale-out tests, which need a real PostgreSQL server: `npm test`
 * (scripts/test-all.sh) starts a throw-away cluster and exports its URL as KICKDRIFT_TEST_PG_URL.
 * Without it (a local `npx vitest run`), these tests are skipped with the reason printed.
 */
import { spawn, type ChildProcess } from "node:child_process";
import { randomBytes } from "node:crypto";
import path from "node:path";

export const PG_URL = process.env.KICKDRIFT_TEST_PG_URL ?? "";

export function reportSkipWithoutPostgres(what: string): void {
  if (!PG_URL)
    console.warn(
      `[skip] ${what}: KICKDRIFT_TEST_PG_URL is unset, so there is no PostgreSQL to run against. ` +
        "`npm test` starts one; locally: eval \"$(npx tsx scripts/temp-postgres.ts start)\" && export KICKDRIFT_TEST_PG_URL",
    );
}

export interface TestDatabase {
  url: string;
  drop(): Promise<void>;
}

/** A new, empty database on the test server (each test file gets its own). */
export async function createTestDatabase(label: string): Promise<TestDatabase> {
  const { Client } = await import("pg");
  const name = `kd_${label}_${process.pid}_${randomBytes(3).toString("hex")}`;
  const admin = new Client({ connectionString: PG_URL });
  await admin.connect();
  await admin.query(`create database ${name}`);
  await admin.end();
  const url = new URL(PG_URL);
  url.pathname = `/${name}`;
  return {
    url: url.toString(),
    async drop() {
      const client = new Client({ connectionString: PG_URL });
      await client.connect();
      await client.query(`drop database if exists ${name} with (force)`);
      await client.end();
    },
  };
}

export interface WorkerHandle {
  child: ChildProcess;
  ownerId: string;
  /** The application_name its database connections carry (PGAPPNAME), to find them in pg_stat_activity. */
  appName: string;
  baseUrl: string;
  output(): string;
  /** Resolves with the exit code (or the signal's name) once the process has ended. */
  exited: Promise<number | string>;
  get(pathname: string): Promise<{ status: number; text: string }>;
  /** A sample of this worker's /metrics, by metric name (labels ignored: one sample each). */
  metric(name: string): Promise<number>;
}

/**
 * `npm run worker` as its package script runs it (`node --import tsx --import ./scripts/server-only-hook.mjs workers/worker-process.ts`,
 * one process, so signals reach the worker itself), with endpoints on a free loopback port.
 * Resolves once the worker answers /ready with 200.
 */
export async function startWorker(databaseUrl: string, env: Record<string, string> = {}, readyTimeoutMs = 60_000): Promise<WorkerHandle> {
  const appName = `kd_test_worker_${randomBytes(4).toString("hex")}`;
  const child = spawn(process.execPath, ["--import", "tsx", "--import", "./scripts/server-only-hook.mjs", path.join("workers", "worker-process.ts")], {
    cwd: process.cwd(),
    env: {
      ...process.env,
      DATABASE_URL: databaseUrl,
      KICKDRIFT_WORKER_PORT: "0",
      KICKDRIFT_WORKER_HOST: "127.0.0.1",
      KICKDRIFT_WORKER_THREADS: "1",
      // node-postgres reads PGAPPNAME for connections configured by URL only.
      PGAPPNAME: appName,
      ...env,
    },
    stdio: ["ignore", "pipe", "pipe"],
  });
  let output = "";
  child.stdout!.on("data", (data: Buffer) => (output += data.toString()));
  child.stderr!.on("data", (data: Buffer) => (output += data.toString()));
  const exited = new Promise<number | string>((resolve) => child.once("exit", (code, signal) => resolve(code ?? signal ?? "unknown")));
  const deadline = Date.now() + readyTimeoutMs;
  let match: RegExpExecArray | null = null;
  while (!(match = /(wrk_\S+): endpoints on (http:\/\/[\d.]+:\d+)/.exec(output))) {
    if (child.exitCode !== null || Date.now() > deadline) throw new Error(`worker did not start:\n${output}`);
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
  const [, ownerId, baseUrl] = match;
  const get = async (pathname: string) => {
    const res = await fetch(`${baseUrl}${pathname}`);
    return { status: res.status, text: await res.text() };
  };
  const handle: WorkerHandle = {
    child,
    ownerId,
    appName,
    baseUrl,
    output: () => output,
    exited,
    get,
    async metric(name: string) {
      const { text } = await get("/metrics");
      const line = text.split("\n").find((l) => l.startsWith(`${name}{`) || l.startsWith(`${name} `));
      if (!line) throw new Error(`no ${name} in the worker's metrics:\n${text}`);
      return Number(line.slice(line.lastIndexOf(" ") + 1));
    },
  };
  for (;;) {
    const ready = await get("/ready").catch(() => ({ status: 0, text: "" }));
    if (ready.status === 200) return handle;
    if (child.exitCode !== null || Date.now() > deadline) throw new Error(`worker never became ready (last /ready ${ready.status}):\n${output}`);
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
}

/** A sample from a Prometheus text body (the first sample of that name). */
export function sampleOf(text: string, name: string, labels = ""): number {
  const prefix = labels ? `${name}{${labels}} ` : `${name} `;
  const line = text.split("\n").find((l) => l.startsWith(prefix));
  if (!line) throw new Error(`no sample ${prefix.trim()} in:\n${text}`);
  return Number(line.slice(prefix.length));
}

/** Polls until `check` returns a value (a hang guard, not a speed check). */
export async function until<T>(what: string, check: () => Promise<T | null | undefined | false>, timeoutMs = 60_000, everyMs = 25): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const value = await check();
    if (value) return value;
    if (Date.now() > deadline) throw new Error(`timed out after ${timeoutMs} ms waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, everyMs));
  }
}

/**
 * "Crate Cascade", an invented arcade game: six crates tumbling in a bin, 16 stiffnesses × 16
 * launch speeds × 16 gravities = 4,096 cells, about 0.3 ms of compute each at 0.5 s (without the
 * gravity axis when gravityCount is 1).
 */
export function crateBinSpec(durationS = 0.5, gravityCount = 16) {
  return {
    name: "Crate Cascade bin",
    scenario: {
      scene: { kind: "box", count: 6, massKg: 0.05, radiusM: 0.04, widthM: 0.6, heightM: 0.6, maxSpeedMPerS: 2, gravityMPerS2: 9.81 },
      contact: { model: "linear", stiffness: 1e4, damping: { kind: "coefficient", value: 0.5 } },
      integrator: "symplectic-euler",
      dtS: 1 / 240,
      substeps: 2,
      durationS,
      seed: 11,
    },
    axes: [
      { parameter: "contact.stiffness", spacing: "log", from: 1e3, to: 1e6, count: 16 },
      { parameter: "scene.maxSpeedMPerS", spacing: "linear", from: 0.5, to: 8, count: 16 },
      ...(gravityCount > 1 ? [{ parameter: "scene.gravityMPerS2", spacing: "linear", from: 0, to: 15, count: gravityCount }] : []),
    ],
  };
}
