import "server-only";
import { and, eq } from "drizzle-orm";
import type { Db } from "../db/client";
import { newId } from "../db/ids";
import { catalogues, memberships, snapshots, studios, users, type StudioRole } from "../db/schema";
import { CRATESLIDE_CATALOGUE_CSV, CRATESLIDE_CATALOGUE_NAME } from "@/lib/catalogues/demo";
import { saveCatalogue } from "@/lib/catalogues/store";
import { CRATESLIDE_SNAPSHOT_JSON, CRATESLIDE_SNAPSHOT_NAME } from "@/lib/snapshots/demo";
import { saveSnapshot } from "@/lib/snapshots/store";
import { hashPassword } from "@/lib/auth/password";
import { DEMO_GRANT_MS, appendLedgerEntry } from "@/lib/ledger/ledger";
import { seedDemoHistory } from "@/lib/demo/history";
import { seedDemoResults } from "@/lib/demo/results";
import { WatchPacer, submitWatchSweep, type WatchPacerOptions } from "@/lib/demo/watch";
import { addSignInHook } from "@/lib/auth/sign-in-hooks";

/**
 * The demo: an invented studio, Gannet Yard Games, tuning the physics of its invented arcade game
 * "Crateslide" (hockey pucks knocking crates across an ice deck), with one person per role, a
 * platform admin and the catalogue of the game's objects. The passwords are public on purpose: this data exists only for demos.
 */
export const DEMO_STUDIO_NAME = "Gannet Yard Games";

export interface DemoAccount {
  email: string;
  password: string;
  name: string;
  role: StudioRole | "admin";
}

export const DEMO_ACCOUNTS: readonly DemoAccount[] = [
  { email: "maren@gannetyard.test", password: "crateslide-owner", name: "Maren Okafor", role: "owner" },
  { email: "tobiah@gannetyard.test", password: "crateslide-engineer", name: "Tobiah Lindqvist", role: "engineer" },
  { email: "ines@gannetyard.test", password: "crateslide-finance", name: "Ines Varga", role: "finance" },
  { email: "ops@kickdrift.test", password: "kickdrift-operator", name: "Kickdrift Operator", role: "admin" },
];

/** Creates whatever part of the demo is missing; running it again changes nothing. */
export async function seedDemo(db: Db): Promise<{ studioId: string; created: boolean }> {
  let created = false;
  const userIds = new Map<string, string>();
  for (const account of DEMO_ACCOUNTS) {
    const [existing] = await db.select({ id: users.id }).from(users).where(eq(users.email, account.email));
    if (existing) {
      userIds.set(account.email, existing.id);
      continue;
    }
    const [row] = await db
      .insert(users)
      .values({
        id: newId("usr"),
        email: account.email,
        name: account.name,
        passwordHash: await hashPassword(account.password),
        isAdmin: account.role === "admin",
        emailVerified: new Date(),
      })
      .onConflictDoNothing({ target: users.email })
      .returning({ id: users.id });
    const id = row?.id ?? (await db.select({ id: users.id }).from(users).where(eq(users.email, account.email)))[0].id;
    userIds.set(account.email, id);
    created = true;
  }
  const owner = DEMO_ACCOUNTS.find((a) => a.role === "owner")!;
  const ownerId = userIds.get(owner.email)!;
  const [existingStudio] = await db
    .select({ id: studios.id })
    .from(studios)
    .innerJoin(memberships, eq(memberships.studioId, studios.id))
    .where(and(eq(studios.name, DEMO_STUDIO_NAME), eq(memberships.userId, ownerId), eq(memberships.role, "owner")));
  let studioId = existingStudio?.id;
  if (!studioId) {
    studioId = newId("std");
    await db.insert(studios).values({ id: studioId, name: DEMO_STUDIO_NAME });
    created = true;
  }
  for (const account of DEMO_ACCOUNTS) {
    if (account.role === "admin") continue; // the operator is not a member of customer studios
    const inserted = await db
      .insert(memberships)
      .values({ studioId, userId: userIds.get(account.email)!, role: account.role })
      .onConflictDoNothing()
      .returning({ userId: memberships.userId });
    if (inserted.length) created = true;
  }
  // Three past months of billing through the local Stripe fake (a demo server only: skipped when
  // billing is not the fake, or the studio has billing already). Before the grant, so the months
  // spend only what they bought and the balance afterwards is the grant.
  {
    const finance = DEMO_ACCOUNTS.find((a) => a.role === "finance")!;
    const admin = DEMO_ACCOUNTS.find((a) => a.role === "admin")!;
    try {
      const started = performance.now();
      const history = await seedDemoHistory(db, studioId, { buyerId: userIds.get(finance.email)!, adminId: userIds.get(admin.email)! });
      if (history.summary) {
        created = true;
        console.log(`[kickdrift] demo billing history: ${history.summary.months.map((m) => m.month).join(", ")} through the local Stripe fake in ${(performance.now() - started).toFixed(0)} ms`);
      }
      else if (history.reason && !history.reason.includes("already has billing")) console.log(`[kickdrift] demo billing history skipped: ${history.reason}`);
    } catch (error) {
      // The rest of the demo does not depend on it (e.g. a Stripe fake store kept from an earlier database).
      console.error(`[kickdrift] demo billing history not made: ${(error as Error).message}`);
    }
  }
  // The demo studio's compute: one grant, keyed so a second seed run adds nothing.
  if (await appendLedgerEntry(db, { studioId, kind: "adjustment", computeMs: DEMO_GRANT_MS, idempotencyKey: "seed:grant", memo: "Demo grant: 600 compute minutes" })) created = true;
  // Crateslide's object catalogue (crates, coins, barrels …), ready for a catalogue check.
  const [catalogue] = await db
    .select({ id: catalogues.id })
    .from(catalogues)
    .where(and(eq(catalogues.studioId, studioId), eq(catalogues.name, CRATESLIDE_CATALOGUE_NAME)))
    .limit(1);
  if (!catalogue) {
    const engineer = DEMO_ACCOUNTS.find((a) => a.role === "engineer")!;
    await saveCatalogue(db, studioId, {
      name: CRATESLIDE_CATALOGUE_NAME,
      fileName: "crateslide-objects.csv",
      mediaType: "text/csv",
      bytes: new TextEncoder().encode(CRATESLIDE_CATALOGUE_CSV),
      createdByUserId: userIds.get(engineer.email) ?? null,
    });
    created = true;
  }
  // A snapshot of Crateslide's loading bay, ready for a sweep over a custom scene.
  const [snapshot] = await db
    .select({ id: snapshots.id })
    .from(snapshots)
    .where(and(eq(snapshots.studioId, studioId), eq(snapshots.name, CRATESLIDE_SNAPSHOT_NAME)))
    .limit(1);
  if (!snapshot) {
    const engineer = DEMO_ACCOUNTS.find((a) => a.role === "engineer")!;
    await saveSnapshot(db, studioId, {
      name: CRATESLIDE_SNAPSHOT_NAME,
      fileName: "crateslide-loading-bay.json",
      bytes: new TextEncoder().encode(CRATESLIDE_SNAPSHOT_JSON),
      createdByUserId: userIds.get(engineer.email) ?? null,
    });
    created = true;
  }
  // Work the studio has done: sweeps, a catalogue check and a snapshot sweep, through the ordinary queue.
  const engineer = DEMO_ACCOUNTS.find((a) => a.role === "engineer")!;
  if ((await seedDemoResults(db, studioId, userIds.get(engineer.email) ?? null)) > 0) created = true;
  return { studioId, created };
}

/** Seeds only into an empty database (no users at all), as KICKDRIFT_DEMO=1 asks. */
export async function seedDemoIfEmpty(db: Db): Promise<{ seeded: boolean }> {
  const [anyUser] = await db.select({ id: users.id }).from(users).limit(1);
  if (anyUser) return { seeded: false };
  await seedDemo(db);
  return { seeded: true };
}

/**
 * The demo's watch sweep (lib/demo/watch.ts): submitted when the demo engineer signs in for the first
 * time, then paced so the visitor can watch it finish. Returns the pacer and a function that undoes
 * the hook (tests); null when the database has no demo studio.
 */
export async function startDemoWatch(db: Db, options: Omit<WatchPacerOptions, "db" | "studioId"> = {}): Promise<{ pacer: WatchPacer; removeHook: () => void } | null> {
  const engineer = DEMO_ACCOUNTS.find((a) => a.role === "engineer")!;
  const [row] = await db
    .select({ studioId: studios.id, engineerId: users.id })
    .from(studios)
    .innerJoin(memberships, eq(memberships.studioId, studios.id))
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(studios.name, DEMO_STUDIO_NAME), eq(users.email, engineer.email), eq(memberships.role, "engineer")))
    .limit(1);
  if (!row) return null;
  const pacer = new WatchPacer({ ...options, db, studioId: row.studioId });
  pacer.start();
  const removeHook = addSignInHook(async (userId) => {
    if (userId !== row.engineerId) return;
    const sweep = await submitWatchSweep(db, row.studioId, row.engineerId);
    if (!sweep) return;
    console.log(`[kickdrift] demo: ${engineer.email} signed in for the first time; "${sweep.name}" started (${sweep.cells} cells, paced to finish in about a minute)`);
    pacer.nudge();
  });
  return { pacer, removeHook };
}

export function demoSignInText(baseUrl: string): string {
  const lines = [
    `Kickdrift demo — sign in at ${baseUrl}/signin (studio "${DEMO_STUDIO_NAME}", invented demo data):`,
    ...DEMO_ACCOUNTS.map((a) => `  ${a.role.padEnd(8)}  ${a.email.padEnd(24)}  password: ${a.password}`),
  ];
  return lines.join("\n");
}
