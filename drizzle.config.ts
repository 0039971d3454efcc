import { defineConfig } from "drizzle-kit";
// db/schema.ts carries the `server-only` marker; drizzle-kit loads it with require() in plain Node.
import "./scripts/server-only-require.cjs";

export default defineConfig({
  dialect: "postgresql",
  schema: "./db/schema.ts",
  out: "./drizzle",
});
