import type { NextConfig } from "next";

const nextConfig: NextConfig = {
  // A separate build folder per checkout or test run (e2e builds into its own, so a dev server is not disturbed).
  distDir: process.env.NEXT_DIST_DIR ?? ".next",
  serverExternalPackages: ["@electric-sql/pglite", "piscina", "smtp-server", "mailparser", "nodemailer", "pg"],
  poweredByHeader: false,
};

export default nextConfig;
