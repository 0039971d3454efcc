import { dirname } from "node:path";
import { fileURLToPath } from "node:url";
import nextVitals from "eslint-config-next/core-web-vitals";
import nextTs from "eslint-config-next/typescript";

const here = dirname(fileURLToPath(import.meta.url));

const config = [
  ...nextVitals,
  ...nextTs,
  {
    ignores: [".next/**", "node_modules/**", "data/**", "drizzle/**", "test-results/**", "playwright-report/**", "next-env.d.ts", ".build/**"],
  },
  {
    settings: { next: { rootDir: here } },
    rules: {
      "@typescript-eslint/no-unused-vars": ["error", { argsIgnorePattern: "^_", varsIgnorePattern: "^_" }],
    },
  },
];

export default config;
