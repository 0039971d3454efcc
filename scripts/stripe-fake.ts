/**
 * Runs the local Stripe fake on its own:
 *   tsx --import ./scripts/server-only-hook.mjs scripts/stripe-fake.ts --port 12111 [--host 127.0.0.1] [--public-url http://localhost:12111] [--state data/stripe-fake.json] [--webhook-url http://127.0.0.1:3000/api/stripe/webhook] [--webhook-secret whsec_…] [--overdue-notice-days 14] [--draft-window-seconds 3600]
 * Point the SDK at it with new Stripe("sk_test_…", { host: "127.0.0.1", port: 12111, protocol: "http" }).
 */
import { startStripeFake } from "../lib/fakes/stripe";

function readArgs(argv: string[]): Record<string, string> {
  const args: Record<string, string> = {};
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    if (!arg.startsWith("--")) throw new Error(`Unexpected argument: ${arg}`);
    const [key, inline] = arg.slice(2).split("=", 2);
    const value = inline ?? argv[++i];
    if (value === undefined) throw new Error(`--${key} needs a value`);
    args[key] = value;
  }
  return args;
}

const KNOWN = new Set(["port", "host", "state", "webhook-url", "webhook-secret", "retry-delays-ms", "public-url", "overdue-notice-days", "draft-window-seconds"]);

async function main() {
  const args = readArgs(process.argv.slice(2));
  for (const key of Object.keys(args)) if (!KNOWN.has(key)) throw new Error(`Unknown option --${key} (known: ${[...KNOWN].map((k) => `--${k}`).join(", ")})`);
  const port = Number(args.port ?? 12111);
  if (!Number.isInteger(port) || port < 0 || port > 65535) throw new Error(`--port must be an integer 0–65535 (got ${args.port})`);
  const retryDelays = args["retry-delays-ms"]?.split(",").map(Number);
  if (retryDelays?.some((n) => !Number.isInteger(n) || n < 0)) throw new Error("--retry-delays-ms must be a comma-separated list of non-negative integers");
  const fake = await startStripeFake({
    port,
    host: args.host,
    store: args.state,
    webhookUrl: args["webhook-url"],
    webhookSecret: args["webhook-secret"],
    webhookRetryDelaysMs: retryDelays,
    publicUrl: args["public-url"],
    overdueNoticeDays: args["overdue-notice-days"] === undefined ? undefined : Number(args["overdue-notice-days"]),
    draftWindowSeconds: args["draft-window-seconds"] === undefined ? undefined : Number(args["draft-window-seconds"]),
  });
  console.log(`Stripe fake listening on ${fake.url}${args.state ? ` (state in ${args.state})` : " (in memory)"}`);
  if (fake.webhookSecret) console.log(`Webhooks to ${args["webhook-url"]} signed with ${fake.webhookSecret}`);
  const stop = async () => {
    await fake.close();
    process.exit(0);
  };
  process.on("SIGINT", stop);
  process.on("SIGTERM", stop);
}

main().catch((err: unknown) => {
  console.error(err instanceof Error ? err.message : err);
  process.exit(1);
});
