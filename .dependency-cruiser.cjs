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
  ],
  options: {
    doNotFollow: { path: "node_modules" },
    exclude: { path: "^(node_modules|\\.next|data|test-results|playwright-report|\\.build)/" },
    tsPreCompilationDeps: true,
    tsConfig: { fileName: "tsconfig.json" },
    enhancedResolveOptions: { exportsFields: ["exports"], conditionNames: ["import", "require", "node", "default", "types"], extensions: [".ts", ".tsx", ".js", ".mjs", ".cjs", ".json"] },
  },
};
