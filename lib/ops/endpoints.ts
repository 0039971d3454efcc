/**
 * Health (liveness) and readiness answers, shared by the app's routes (app/api/health, app/api/ready)
 * and the standalone worker's own small HTTP server (workers/worker-process.ts).
 * - health: the process is up and answering; it touches nothing else, so a slow database never
 *   gets a healthy process restarted.
 * - ready: the process can do its work now: the database answers (migrations done, as getDb
 *   migrates before it hands the client out) and, for a worker, its runner is claiming chunks.
 */
import "server-only";
import { sql } from "drizzle-orm";
import type { Db } from "@/db/client";
import { errorResponse, json } from "@/lib/api/respond";
import { ApiError } from "@/lib/errors";

export const READY_TIMEOUT_MS = 3_000;

export type ProcessRole = "app" | "worker";

export function healthResponse(role: ProcessRole, details: Record<string, unknown> = {}): Response {
  return json({ status: "ok", role, pid: process.pid, uptimeS: Math.floor(process.uptime()), ...details });
}

export function databaseKind(): "postgresql" | "pglite" {
  return process.env.DATABASE_URL ? "postgresql" : "pglite";
}

function withTimeout<T>(work: Promise<T>, ms: number, what: string): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  return Promise.race([
    work,
    new Promise<T>((_, reject) => (timer = setTimeout(() => reject(new Error(`${what} did not answer within ${ms} ms`)), ms))),
  ]).finally(() => clearTimeout(timer));
}

/**
 * 200 with the checks when the database answers `select 1` within READY_TIMEOUT_MS and every extra
 * check passes; otherwise 503 `not_ready` naming the failed check.
 */
export async function readinessResponse(
  role: ProcessRole,
  openDb: () => Promise<Db>,
  extra: { failure?: string | null; details?: Record<string, unknown> } = {},
): Promise<Response> {
  try {
    await withTimeout(
      openDb().then((db) => db.execute(sql`select 1`)),
      READY_TIMEOUT_MS,
      "the database",
    );
  } catch (error) {
    return errorResponse(new ApiError("not_ready", `Not ready: ${error instanceof Error ? error.message : String(error)}`, "database"));
  }
  if (extra.failure) return errorResponse(new ApiError("not_ready", `Not ready: ${extra.failure}`));
  return json({ status: "ready", role, database: databaseKind(), ...extra.details });
}
