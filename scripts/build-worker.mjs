// Bundles the worker-thread entry so the thread pool can load it from a plain .mjs file
// under `next start` as well as from the command line.
import { build } from "esbuild";
import { existsSync, mkdirSync } from "node:fs";
import path from "node:path";

const entry = path.join(process.cwd(), "workers", "chunk-worker.ts");
const outDir = path.join(process.cwd(), ".build");
mkdirSync(outDir, { recursive: true });
if (existsSync(entry)) {
  await build({
    entryPoints: [entry],
    bundle: true,
    platform: "node",
    format: "esm",
    target: "node20",
    outfile: path.join(outDir, "chunk-worker.mjs"),
    logLevel: "warning",
  });
}
