/**
 * A throw-away PostgreSQL cluster for tests and benchmarks: Debian's binaries
 * (/usr/lib/postgresql/<version>/bin), initdb into a temporary folder, the server on 127.0.0.1 and
 * a free port, trust authentication, durability switched off (the data is thrown away).
 * initdb refuses to run as root, so as root the cluster is made and run as the `postgres` user.
 *
 *   npx tsx scripts/temp-postgres.ts start   → prints KICKDRIFT_TEST_PG_URL=… and KICKDRIFT_TEST_PG_DIR=… (for eval)
 *   npx tsx scripts/temp-postgres.ts stop <dir>
 */
import { execFileSync } from "node:child_process";
import { chownSync, existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from "node:fs";
import { createServer } from "node:net";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";

export interface TempPostgres {
  /** postgres://postgres@127.0.0.1:<port>/postgres */
  url: string;
  dir: string;
  stop(): void;
}

/** The newest Debian PostgreSQL bin folder (or PG_BIN_DIR), or null when PostgreSQL is not installed. */
export function postgresBinDir(): string | null {
  if (process.env.PG_BIN_DIR) return existsSync(path.join(process.env.PG_BIN_DIR, "initdb")) ? process.env.PG_BIN_DIR : null;
  const root = "/usr/lib/postgresql";
  if (!existsSync(root)) return null;
  const versions = readdirSync(root)
    .filter((v) => existsSync(path.join(root, v, "bin", "initdb")))
    .sort((a, b) => Number(b) - Number(a));
  return versions.length ? path.join(root, versions[0], "bin") : null;
}

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = createServer();
    server.once("error", reject);
    server.listen(0, "127.0.0.1", () => {
      const address = server.address();
      server.close(() => (typeof address === "object" && address ? resolve(address.port) : reject(new Error("no port"))));
    });
  });
}

const isRoot = () => process.getuid?.() === 0;

/** Runs a PostgreSQL binary, as the postgres user when we are root. */
function runPg(binDir: string, tool: string, args: string[]): string {
  const binary = path.join(binDir, tool);
  const [file, argv] = isRoot() ? ["runuser", ["-u", "postgres", "--", binary, ...args]] : [binary, args];
  return execFileSync(file, argv, { encoding: "utf8", stdio: ["ignore", "pipe", "pipe"] });
}

function postgresIds(): { uid: number; gid: number } {
  const uid = Number(execFileSync("id", ["-u", "postgres"], { encoding: "utf8" }).trim());
  const gid = Number(execFileSync("id", ["-g", "postgres"], { encoding: "utf8" }).trim());
  return { uid, gid };
}

export function stopTempPostgres(dir: string, binDir = postgresBinDir()): void {
  if (binDir && existsSync(path.join(dir, "data", "postmaster.pid"))) {
    try {
      runPg(binDir, "pg_ctl", ["-D", path.join(dir, "data"), "-m", "immediate", "-w", "stop"]);
    } catch {
      // Already stopped.
    }
  }
  rmSync(dir, { recursive: true, force: true });
}

/** Starts a new cluster; throws with a clear message when PostgreSQL is not installed. */
export async function startTempPostgres(): Promise<TempPostgres> {
  const binDir = postgresBinDir();
  if (!binDir) throw new Error("PostgreSQL is not installed (no /usr/lib/postgresql/<version>/bin/initdb): apt-get install -y postgresql");
  const dir = mkdtempSync(path.join(os.tmpdir(), "kd-pg-"));
  if (isRoot()) {
    const { uid, gid } = postgresIds();
    chownSync(dir, uid, gid);
  }
  const data = path.join(dir, "data");
  try {
    runPg(binDir, "initdb", ["-D", data, "-U", "postgres", "--auth=trust", "--encoding=UTF8", "--locale=C", "--no-sync"]);
    const port = await freePort();
    const options = [
      "-c listen_addresses=127.0.0.1",
      `-p ${port}`,
      `-k ${dir}`,
      "-c fsync=off",
      "-c synchronous_commit=off",
      "-c full_page_writes=off",
      "-c max_connections=200",
    ].join(" ");
    runPg(binDir, "pg_ctl", ["-D", data, "-l", path.join(dir, "server.log"), "-w", "-t", "60", "-o", options, "start"]);
    return { url: `postgres://postgres@127.0.0.1:${port}/postgres`, dir, stop: () => stopTempPostgres(dir, binDir) };
  } catch (error) {
    const log = path.join(dir, "server.log");
    const detail = existsSync(log) ? `\n${readFileSync(log, "utf8").slice(-2000)}` : "";
    stopTempPostgres(dir, binDir);
    const stderr = (error as { stderr?: string }).stderr ?? "";
    throw new Error(`could not start a temporary PostgreSQL: ${(error as Error).message}${stderr ? `\n${stderr}` : ""}${detail}`);
  }
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const [command, dir] = process.argv.slice(2);
  if (command === "start") {
    startTempPostgres()
      .then((pg) => console.log(`KICKDRIFT_TEST_PG_URL=${pg.url}\nKICKDRIFT_TEST_PG_DIR=${pg.dir}`))
      .catch((error: unknown) => {
        console.error((error as Error).message);
        process.exit(1);
      });
  } else if (command === "stop" && dir) {
    stopTempPostgres(dir);
  } else {
    console.error("usage: tsx scripts/temp-postgres.ts start | stop <dir>");
    process.exit(2);
  }
}
