import { defineConfig } from "vitest/config";
import path from "node:path";

export default defineConfig({
  resolve: { alias: { "@": path.resolve(__dirname) } },
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
