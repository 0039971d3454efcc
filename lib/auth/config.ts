import "server-only";
import { chmodSync, existsSync, mkdirSync, readFileSync, writeFileSync } from "node:fs";
import path from "node:path";
import { randomBytes } from "node:crypto";
import { dataDir } from "@/db/client";

/** The public base URL used in mailed links. */
export function appBaseUrl(): string {
  return (process.env.NEXTAUTH_URL ?? "http://localhost:3000").replace(/\/+$/, "");
}

let cachedSecret: string | undefined;

/**
 * NEXTAUTH_SECRET, or when unset a random secret generated once and kept in the data folder so
 * sessions survive restarts. Also exported to process.env so next-auth helpers called without
 * options (getServerSession in a page) agree with the route handlers.
 */
export function getAuthSecret(): string {
  if (process.env.NEXTAUTH_SECRET) return process.env.NEXTAUTH_SECRET;
  if (cachedSecret) return cachedSecret;
  const dir = dataDir();
  const file = path.join(dir, "nextauth-secret");
  mkdirSync(dir, { recursive: true });
  if (!existsSync(file)) {
    // "wx" fails if another process created it first; then we read theirs.
    try {
      writeFileSync(file, randomBytes(32).toString("base64url"), { flag: "wx", mode: 0o600 });
    } catch (error) {
      if ((error as NodeJS.ErrnoException).code !== "EEXIST") throw error;
    }
    try {
      chmodSync(file, 0o600);
    } catch {
      // best effort on filesystems without modes
    }
  }
  cachedSecret = readFileSync(file, "utf8").trim();
  process.env.NEXTAUTH_SECRET = cachedSecret;
  return cachedSecret;
}

/** next-auth switches to `__Secure-` cookie names when the site is served over https. */
export function usesSecureCookies(): boolean {
  return appBaseUrl().startsWith("https://");
}
