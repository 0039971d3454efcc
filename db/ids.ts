import "server-only";
import { createHash, randomBytes } from "node:crypto";

/** Opaque URL-safe identifiers: a type prefix plus 16 random bytes (base64url, 22 characters). */
export type IdPrefix = "usr" | "std" | "inv" | "tok" | "pwr" | "msg" | "cat" | "chk" | "snp" | "whk" | "ses";

export function newId(prefix: IdPrefix): string {
  return `${prefix}_${randomBytes(16).toString("base64url")}`;
}

/** A secret for a link or a bearer token: 32 random bytes, base64url. */
export function newSecret(): string {
  return randomBytes(32).toString("base64url");
}

/** Secrets are stored only as their sha256 (hex); a database leak does not leak usable links. */
export function sha256Hex(value: string): string {
  return createHash("sha256").update(value, "utf8").digest("hex");
}
