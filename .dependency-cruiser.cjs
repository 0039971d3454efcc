/**
 * The house's layers, checked by dependency-cruiser (`npm run check:deps`, part of `npm test`).
 * Type-only imports carry no code and are allowed across layers.
 */
const BROWSER_SAFE = [
  "^components/",
  "^lib/physics/",
  "^lib/charts/",
  "^lib/ui/",
  // lib/sweeps is browser-safe but for the worker-thread pool and the spec hash (node:crypto).
  "^lib/sweeps/(?!(pool|run|chunk-task|worker|hash)[.]ts$)",
  "^lib/billing/(format|packs)[.]ts$",
  "^lib/catalogues/(demo|format)[.]ts$",
  "^lib/snapshots/(demo|drawing|format)[.]ts$",
  "^lib/(csv|zod)[.]ts$",
  "^lib/api/text[.]ts$",
];
const browserSafe = `(${BROWSER_SAFE.join("|")})`;
/**
 * Server-side modules that plain-Node bundles load without Next and without the server-only hook:
 * the worker thread (esbuild's .build/chunk-worker.mjs) and the command-line client (.build/cli/kickdrift.mjs).
 * They carry no `import "server-only"` (its package throws there) and touch no database, secret or I/O of the app.
 */
const PLAIN_NODE_SHARED = ["^lib/sweeps/chunk-task[.]ts$", "^lib/catalogues/(check|friction-check|pairs)[.]ts$"];
const plainNodeShared = `(${PLAIN_NODE_SHARED.join("|")})`;
/** The `server-only` marker package, as resolved outside a React server bundle. */
const SERVER_ONLY = "^node_modules/server-only/";

/** @type {import('dependency-cruiser').IConfiguration} */
module.exports = {
  forbidden: [
    {
      name: "no-circular",
      severity: "error",
      comment: "Import circles hide which module owns what. A circle closed only by type imports carries no code and is allowed (a settings type read by its helpers).",
      from: {},
      to: { circular: true, viaOnly: { dependencyTypesNot: ["type-only"] } },
    },
    {
      name: "physics-is-pure",
      severity: "error",
      comment: "lib/physics is pure numerics: it imports only itself (no packages, no node built-ins, nothing of the app).",
      from: { path: "^lib/physics/" },
      to: { pathNot: "^lib/physics/", dependencyTypesNot: ["type-only"] },
    },
    {
      name: "browser-code-stays-browser-safe",
      severity: "error",
      comment: "Client components and the modules they bundle import no server module (database, queue, billing writes, mail, fakes) and no node built-in.",
      from: { path: browserSafe },
      to: { pathNot: `(${browserSafe}|^node_modules/)`, dependencyTypesNot: ["type-only"] },
    },
    {
      name: "no-node-builtins-in-browser-code",
      severity: "error",
      from: { path: browserSafe },
      to: { dependencyTypes: ["core"] },
    },
    {
      name: "lib-does-not-import-the-ui",
      severity: "error",
      comment: "Domain code (lib/, db/, workers/) never reaches into pages, route handlers or components.",
      from: { path: "^(lib|db|workers)/" },
      to: { path: "^(app|components)/" },
    },
    {
      name: "the-boot-is-the-top-floor",
      severity: "error",
      comment: "server/ (process boot, demo seed) starts everything; nothing below imports it.",
      from: { path: "^(lib|db|workers|components|cli)/" },
      to: { path: "^server/" },
    },
    {
      name: "fakes-only-from-the-boot",
      severity: "error",
      comment: "The local Stripe and SMTP fakes are started by the boot (demo/dev/test) and scripts/, never imported by product code.",
      from: { path: "^(app|components|lib|workers|cli)/", pathNot: "^lib/fakes/" },
      to: { path: "^lib/fakes/", dependencyTypesNot: ["type-only"] },
    },
    {
      name: "database-is-the-ground-floor",
      severity: "error",
      comment: "db/ (schema, client, ids) imports nothing of the app: the boot and the demo seed live in server/.",
      from: { path: "^db/" },
      to: { pathNot: "^(db/|node_modules/)", dependencyTypesNot: ["type-only", "core"] },
    },
    {
      name: "no-server-only-in-browser-code",
      severity: "error",
      comment: "A browser-safe module with `import \"server-only\"` would fail `next build` in every client component that imports it.",
      from: { path: browserSafe },
      to: { path: SERVER_ONLY },
    },
    {
      name: "plain-node-bundles-load-no-server-module",
      severity: "error",
      comment: "The worker thread and the command-line client run as esbuild bundles in plain Node, where `server-only` throws: nothing they load, directly or not, carries the marker.",
      from: { path: "^(workers/chunk-worker|cli/entry)[.]ts$" },
      to: { path: SERVER_ONLY, reachable: true },
    },
  ],
  required: [
    {
      name: "server-modules-carry-server-only",
      severity: "error",
      comment: "Every module of db/, server/ and lib/ that is not browser-safe starts with `import \"server-only\"`, so `next build` fails when a client component reaches it (Next resolves the marker to an empty module in route handlers, server components, instrumentation and the proxy). Plain Node loads it through scripts/server-only-hook.mjs, Vitest through its alias.",
      module: { path: "^(db|server|lib)/[^.]+[.]tsx?$", pathNot: `(${browserSafe}|${plainNodeShared}|[.]d[.]ts$)` },
      to: { path: SERVER_ONLY },
    },
  ],
  options: {
    doNotFollow: { path: "node_modules" },
    exclude: { path: "^(\\.next|data|test-results|playwright-report|\\.build)/" },
    tsPreCompilationDeps: true,
    tsConfig: { fileName: "tsconfig.json" },
    enhancedResolveOptions: { exportsFields: ["exports"], conditionNames: ["import", "require", "node", "default", "types"], extensions: [".ts", ".tsx", ".js", ".mjs", ".cjs", ".json"] },
  },
};
