import type { NextConfig } from "next";

const nextConfig: NextConfig = {
  // A separate build folder per checkout or test run (e2e builds into its own, so a dev server is not disturbed).
  distDir: process.env.NEXT_DIST_DIR ?? ".next",
  serverExternalPackages: ["@electric-sql/pglite", "piscina", "smtp-server", "mailparser", "nodemailer", "pg"],
  poweredByHeader: false,
  // forbidden() in the page guard answers a real HTTP 403 with app/forbidden.tsx.
  experimental: { authInterrupts: true },
};

export default nextConfig;
