import "server-only";
import bcrypt from "bcryptjs";
import { z } from "@/lib/zod";

export const PASSWORD_MIN_LENGTH = 10;
export const PASSWORD_MAX_LENGTH = 200;
const BCRYPT_COST = 10;

export const passwordSchema = z
  .string({ error: "Password is required." })
  .min(PASSWORD_MIN_LENGTH, { error: `Password must be at least ${PASSWORD_MIN_LENGTH} characters.` })
  .max(PASSWORD_MAX_LENGTH, { error: `Password must be at most ${PASSWORD_MAX_LENGTH} characters.` });

export const emailSchema = z
  .string({ error: "E-mail is required." })
  .trim()
  .max(254, { error: "E-mail must be at most 254 characters." })
  .pipe(z.email({ error: "E-mail is not a valid address." }))
  .transform((email) => email.toLowerCase());

export function hashPassword(password: string): Promise<string> {
  return bcrypt.hash(password, BCRYPT_COST);
}

export function verifyPassword(password: string, hash: string): Promise<boolean> {
  return bcrypt.compare(password, hash);
}

// Compared against when the account does not exist, so a wrong e-mail costs as long as a wrong password.
let dummyHash: string | undefined;
export async function burnPasswordCheck(password: string): Promise<void> {
  dummyHash ??= await bcrypt.hash("kickdrift-no-such-account", BCRYPT_COST);
  await bcrypt.compare(password, dummyHash);
}
