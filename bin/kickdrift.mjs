#!/usr/bin/env node
// `npx kickdrift …` from a checkout: runs the bundled client (`npm run build:cli`), or the
// TypeScript source through tsx when the bundle has not been built.
import { existsSync } from "node:fs";
import { fileURLToPath, pathToFileURL } from "node:url";
import path from "node:path";

const root = path.dirname(path.dirname(fileURLToPath(import.meta.url)));
const bundle = path.join(root, ".build", "cli", "kickdrift.mjs");
if (existsSync(bundle)) {
  await import(pathToFileURL(bundle).href);
} else {
  const { register } = await import("tsx/esm/api");
  register();
  await import(pathToFileURL(path.join(root, "cli", "entry.ts")).href);
}
