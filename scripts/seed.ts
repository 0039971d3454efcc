// `npm run db:seed`: creates the invented demo studio and its sign-ins (idempotent), then prints them.
import { closeDb, getDb } from "../db/client";
import { demoSignInText, seedDemo } from "../server/seed";
import { appBaseUrl } from "../lib/auth/config";

async function main(): Promise<void> {
  const db = await getDb();
  const { created } = await seedDemo(db);
  console.log(created ? "Demo data created." : "Demo data already present; nothing changed.");
  console.log(demoSignInText(appBaseUrl()));
  await closeDb();
}

main().catch((error: unknown) => {
  console.error(error);
  process.exit(1);
});
