import { afterAll, beforeAll } from "vitest";
import type { Db } from "@/db/client";
import { startMailFake, type MailFake } from "@/lib/fakes/smtp-fake";
import { closeTestDb, useFreshDb } from "./db";

/**
 * The setup of a test file whose routes send mail: a fresh database and the SMTP fake on a random
 * port, opened before the file's tests and closed after them. `take` receives the database;
 * `beforeClose` runs first in the closing hook (work still pending after a response, fake timers).
 */
export function withFreshDbAndMailFake(take: (db: Db) => void, beforeClose?: () => unknown): void {
  let fake: MailFake | undefined;
  beforeAll(async () => {
    take(await useFreshDb());
    fake = await startMailFake({ port: 0 });
  });
  afterAll(async () => {
    await beforeClose?.();
    await fake?.close();
    await closeTestDb();
  });
}
