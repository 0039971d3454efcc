// Bundles the command-line client (cli/entry.ts) into one plain-node file, .build/cli/kickdrift.mjs,
// which bin/kickdrift.mjs runs. Its dependencies (commander, cli-progress, zod)
// are bundled in, so the file runs with node alone.
import { build } from "esbuild";
import path from "node:path";

await build({
  entryPoints: [path.join(process.cwd(), "cli", "entry.ts")],
  bundle: true,
  platform: "node",
  format: "esm",
  target: "node20",
  outfile: path.join(process.cwd(), ".build", "cli", "kickdrift.mjs"),
  // CommonJS packages in an ESM bundle call require(); give them one.
  banner: { js: "import { createRequire as __kdCreateRequire } from 'node:module'; const require = __kdCreateRequire(import.meta.url);" },
  logLevel: "warning",
});
