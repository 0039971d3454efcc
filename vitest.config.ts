import { defineConfig } from "vitest/config";
import path from "node:path";

export default defineConfig({
  resolve: {
    alias: {
      "@": path.resolve(__dirname),
      // Server modules start with `import "server-only"`, a marker that Next resolves itself (empty in
      // route handlers, server components and instrumentation; a build error in a client component).
      // Vitest runs them in plain Node, where the package's default export throws. Its own empty module
      // (the package's `react-server` export) stands in for it here; the `react-server` condition is not
      // set for the whole run because it would switch react-dom/server and React to their server builds.
      "server-only": path.resolve(__dirname, "node_modules/server-only/empty.js"),
    },
  },
  test: {
    include: ["tests/unit/**/*.test.ts", "tests/integration/**/*.test.ts"],
    environment: "node",
    // Hang guards, not speed checks: sized for a machine whose two cores also carry other work
    // (`npm run test:hostile -- load`), where a fresh database with its migrations and a warm pool
    // can take a minute to set up.
    testTimeout: 120_000,
    hookTimeout: 240_000,
    pool: "forks",
  },
});
