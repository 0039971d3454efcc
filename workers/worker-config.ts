/** Settings of the standalone worker process (workers/worker-process.ts), read from the environment. */
import { defaultThreadCount, type WorkerEntry } from "../lib/sweeps/pool";

export interface WorkerConfig {
  databaseUrl: string;
  threads: number;
  port: number;
  host: string;
  leaseMs: number;
  pollMs: number;
  shutdownGraceMs: number;
  entry: WorkerEntry;
}

export class WorkerConfigError extends Error {}

function integerSetting(env: Record<string, string | undefined>, name: string, fallback: number, min: number, max: number): number {
  const raw = env[name];
  if (raw === undefined || raw === "") return fallback;
  const value = Number(raw);
  if (!Number.isInteger(value) || value < min || value > max) throw new WorkerConfigError(`${name} must be an integer from ${min} to ${max}; got "${raw}"`);
  return value;
}

export function workerConfig(env: Record<string, string | undefined> = process.env): WorkerConfig {
  const databaseUrl = env.DATABASE_URL ?? "";
  if (!databaseUrl)
    throw new WorkerConfigError(
      "DATABASE_URL is not set: worker processes share the queue through PostgreSQL (the embedded PGlite serves one process; its in-process runner needs no worker)",
    );
  const entry = env.KICKDRIFT_WORKER_ENTRY ?? "source";
  if (entry !== "source" && entry !== "bundle") throw new WorkerConfigError(`KICKDRIFT_WORKER_ENTRY must be source or bundle; got "${entry}"`);
  return {
    databaseUrl,
    threads: integerSetting(env, "KICKDRIFT_WORKER_THREADS", defaultThreadCount(), 1, 256),
    port: integerSetting(env, "KICKDRIFT_WORKER_PORT", 3100, 0, 65535),
    host: env.KICKDRIFT_WORKER_HOST || "0.0.0.0",
    leaseMs: integerSetting(env, "KICKDRIFT_LEASE_MS", 60_000, 300, 3_600_000),
    pollMs: integerSetting(env, "KICKDRIFT_POLL_MS", 250, 10, 60_000),
    shutdownGraceMs: integerSetting(env, "KICKDRIFT_SHUTDOWN_GRACE_MS", 8_000, 0, 3_600_000),
    entry,
  };
}
