/**
 * Server modules outside Next: the `server-only` marker really stops a plain-Node load, and the two
 * stand-ins (scripts/server-only-hook.mjs for `import`, scripts/server-only-require.cjs for drizzle-kit's
 * require()) let exactly that one specifier through while every other package keeps Node's default
 * conditions (react-dom/server stays its Node build, which `--conditions=react-server` would replace).
 */
import { spawnSync } from "node:child_process";
import { describe, expect, it } from "vitest";

function node(args: string[]) {
  const result = spawnSync(process.execPath, args, { cwd: process.cwd(), encoding: "utf8", timeout: 60_000 });
  return { status: result.status, stdout: result.stdout.trim(), stderr: result.stderr };
}

/** Loads a marked server module (db/ids.ts) through tsx and prints the id it makes. */
const LOAD_MARKED = "import('./db/ids.ts').then((m) => console.log(m.newId('usr')))";
/** Prints where react-dom/server resolves. */
const RESOLVE_REACT_DOM_SERVER = "console.log(import.meta.resolve('react-dom/server'))";

describe("server-only in plain Node", () => {
  it("refuses a marked module without the hook: the marker is not decoration", () => {
    const run = node(["--import", "tsx", "-e", LOAD_MARKED]);
    expect(run.status).not.toBe(0);
    expect(run.stderr).toContain("This module cannot be imported from a Client Component module");
  });

  it("loads it with the hook, and leaves every other package on Node's default conditions", () => {
    const run = node(["--import", "tsx", "--import", "./scripts/server-only-hook.mjs", "-e", LOAD_MARKED]);
    expect(run.stderr).toBe("");
    expect(run.status).toBe(0);
    expect(run.stdout).toMatch(/^usr_[A-Za-z0-9_-]{22}$/);

    const resolved = node(["--import", "./scripts/server-only-hook.mjs", "--input-type=module", "-e", RESOLVE_REACT_DOM_SERVER]);
    expect(resolved.status).toBe(0);
    expect(resolved.stdout).toMatch(/react-dom\/server\.node\.js$/);
  });

  it("answers drizzle-kit's require('server-only') with the empty module and nothing else", () => {
    const run = node([
      "-e",
      "require('./scripts/server-only-require.cjs'); console.log(require.resolve('server-only')); console.log(require.resolve('react-dom/server'))",
    ]);
    expect(run.status).toBe(0);
    const [marker, reactDomServer] = run.stdout.split("\n");
    expect(marker).toMatch(/node_modules\/server-only\/empty\.js$/);
    expect(reactDomServer).toMatch(/react-dom\/server\.node\.js$/);
  });
});
