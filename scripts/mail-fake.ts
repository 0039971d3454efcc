/**
 * Runs the local mail fake on its own (the compose file's mail service):
 *   tsx --import ./scripts/server-only-hook.mjs scripts/mail-fake.ts [--host 0.0.0.0] [--port 2525]
 * It stores every message in the database named by DATABASE_URL (mail_messages), where the app's
 * /mail page reads them; point the app at it with MAIL_FAKE_HOST (and MAIL_FAKE_PORT).
 */
import { closeDb, getDb } from "../db/client";
import { startMailFake } from "../lib/fakes/smtp-fake";

function readArgs(argv: string[]): { host: string; port: number } {
  const args: Record<string, string> = {};
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    if (!arg.startsWith("--")) throw new Error(`Unexpected argument: ${arg}`);
    const [key, inline] = arg.slice(2).split("=", 2);
    if (key !== "host" && key !== "port") throw new Error(`Unknown option --${key} (known: --host, --port)`);
    const value = inline ?? argv[++i];
    if (value === undefined) throw new Error(`--${key} needs a value`);
    args[key] = value;
  }
  const port = Number(args.port ?? process.env.MAIL_FAKE_PORT ?? 2525);
  if (!Number.isInteger(port) || port < 0 || port > 65535) throw new Error(`--port must be an integer 0–65535 (got ${args.port})`);
  return { host: args.host ?? "127.0.0.1", port };
}

async function main() {
  const { host, port } = readArgs(process.argv.slice(2));
  await getDb(); // migrated (under the advisory lock on PostgreSQL) before the first message arrives
  const fake = await startMailFake({ host, port });
  console.log(`Mail fake listening on smtp://${fake.host}:${fake.port}; messages stored in the ${process.env.DATABASE_URL ? "PostgreSQL" : "PGlite"} database`);
  const stop = async () => {
    await fake.close();
    await closeDb();
    process.exit(0);
  };
  process.on("SIGINT", () => void stop());
  process.on("SIGTERM", () => void stop());
}

main().catch((err: unknown) => {
  console.error(err instanceof Error ? err.message : err);
  process.exit(1);
});
