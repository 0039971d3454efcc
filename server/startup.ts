import "server-only";

// Node-only start-up work for a server process, loaded from instrumentation.ts. Kept in its own
// module so the Edge build of instrumentation never pulls in the database, fs or the SMTP server.
const startupKey = Symbol.for("kickdrift.startup");

/** Migrations, the auth secret, the local mail fake (when no SMTP_URL nor MAIL_FAKE_HOST), billing (the local Stripe fake when no STRIPE_SECRET_KEY), the outbox dispatcher, the queue runner (unless KICKDRIFT_RUNNER=off), and with KICKDRIFT_DEMO=1 the demo seed. Idempotent. */
export function startServerServices(): Promise<void> {
  const store = globalThis as unknown as Record<symbol, Promise<void> | undefined>;
  store[startupKey] ??= run().catch((error: unknown) => {
    store[startupKey] = undefined;
    throw error;
  });
  return store[startupKey];
}

/** Thrown when a production start lacks the settings that replace the local fakes; its message is the one line printed. */
export class RefusedStart extends Error {
  override name = "RefusedStart";
}

async function run(): Promise<void> {
  {
    // Before anything listens or migrates: a production start never falls back to the local fakes.
    const { productionStartProblem } = await import("../lib/mail/mode");
    const problem = productionStartProblem();
    if (problem) throw new RefusedStart(problem);
  }
  const { getDb } = await import("../db/client");
  const { getAuthSecret, appBaseUrl } = await import("../lib/auth/config");
  const db = await getDb();
  {
    // The database refuses UPDATE and DELETE on the audit log (a trigger drizzle-kit cannot generate).
    const { ensureAuditAppendOnly } = await import("../lib/audit/audit");
    await ensureAuditAppendOnly(db);
  }
  getAuthSecret();
  const { isMailFakeEnabled } = await import("../lib/mail/mode");
  if (isMailFakeEnabled() && process.env.MAIL_FAKE_HOST) {
    // The fake runs as its own process (scripts/mail-fake.ts, the compose file's mail service).
    console.log(`[kickdrift] mail goes to the mail fake at smtp://${process.env.MAIL_FAKE_HOST}:${process.env.MAIL_FAKE_PORT ?? 2525}; messages at ${appBaseUrl()}/mail`);
  } else if (isMailFakeEnabled()) {
    const { startMailFake } = await import("../lib/fakes/smtp-fake");
    try {
      const fake = await startMailFake();
      console.log(`[kickdrift] local mail fake on smtp://${fake.host}:${fake.port}; messages at ${appBaseUrl()}/mail`);
    } catch (error) {
      // Another process holds the port: mail sent from here then goes to that process's fake.
      console.error(`[kickdrift] could not start the local mail fake: ${(error as Error).message}`);
    }
  }
  {
    // Billing: Stripe test mode with STRIPE_SECRET_KEY, else the local Stripe fake; meter events go out through the outbox.
    const { startBilling, stripeFakeOptions } = await import("../lib/billing/startup");
    const { usesStripeFake } = await import("../lib/billing/stripe");
    try {
      // The boot, not billing, starts the fake (demo, development and tests: production refused above).
      const localStripe = usesStripeFake() ? await (await import("../lib/fakes/stripe")).ensureStripeFake(stripeFakeOptions()) : undefined;
      console.log(`[kickdrift] ${await startBilling(db, localStripe)}`);
    } catch (error) {
      // Without Stripe the site still serves pages; billing routes answer 503 until it is reachable.
      console.error(`[kickdrift] could not start billing: ${(error as Error).message}`);
    }
  }
  {
    // Signed webhooks: their outbox handler, and the scan that queues sweep and check events.
    const { startWebhooks } = await import("../lib/webhooks/startup");
    startWebhooks(db);
    // Delivers queued side effects (mail, Stripe meter events, webhooks); every process may run one.
    const { startProcessOutbox } = await import("../lib/outbox/process");
    await startProcessOutbox();
  }
  if (process.env.KICKDRIFT_RUNNER !== "off") {
    const { startProcessRunner } = await import("../lib/queue/runner");
    try {
      const runner = await startProcessRunner();
      console.log(`[kickdrift] queue runner ${runner?.ownerId} started`);
    } catch (error) {
      // Without a runner the site still serves pages; queued sweeps wait until a runner starts.
      console.error(`[kickdrift] could not start the queue runner: ${(error as Error).message}`);
    }
  }
  if (process.env.KICKDRIFT_DEMO === "1") {
    const { demoSignInText, seedDemoIfEmpty, startDemoWatch } = await import("./seed");
    const { seeded } = await seedDemoIfEmpty(db);
    // The sweep a visitor watches finish: started by the demo engineer's first sign-in, then paced.
    await startDemoWatch(db);
    console.log(`[kickdrift] ${seeded ? "demo data seeded" : "database not empty; demo seed skipped"}`);
    console.log(demoSignInText(appBaseUrl()));
  }
}
