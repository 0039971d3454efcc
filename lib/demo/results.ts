/**
 * The demo studio's work, as a studio that has used Kickdrift for a while would have it: sweeps
 * from the templates and examples, a catalogue check and a snapshot sweep, all submitted through
 * the ordinary queue (submitSweep / submitCheck), so the server's queue runner computes and bills
 * them like any other work; they are finished within seconds of start-up. (The sweep a visitor
 * watches run is started later, at the demo engineer's first sign-in: lib/demo/watch.ts.) Each is
 * keyed by its name: seeding again adds nothing.
 */
import "server-only";
import { and, eq } from "drizzle-orm";
import type { Db } from "@/db/client";
import { catalogueChecks, catalogues, snapshots, sweeps } from "@/db/schema";
import { CRATESLIDE_CATALOGUE_NAME, CRATESLIDE_SETTINGS } from "@/lib/catalogues/demo";
import { submitCheck } from "@/lib/catalogues/store";
import { submitSweep } from "@/lib/queue/submit";
import { CRATESLIDE_SNAPSHOT_NAME } from "@/lib/snapshots/demo";
import { snapshotSweepSpec } from "@/lib/snapshots/store";
import type { SweepSpecInput } from "@/lib/sweeps/spec";
import { findTemplate } from "@/lib/sweeps/templates";
import jellybeanJar from "@/examples/jellybean-jar-box.json";
import puckyard from "@/examples/puckyard-air-hockey.json";

export interface DemoSweep {
  /** What the sweep shows a visitor. */
  role: "exploded-cells" | "integrators" | "box-scene" | "tunnelling";
  spec: SweepSpecInput;
}

function template(id: string): SweepSpecInput {
  const found = findTemplate(id);
  if (!found) throw new Error(`demo: no template ${id}`);
  return found.spec;
}

/** The spec with another simulated duration (s). */
function longer(spec: SweepSpecInput, durationS: number): SweepSpecInput {
  return { ...spec, scenario: { ...spec.scenario, durationS } } as SweepSpecInput;
}

/** The demo's sweeps in submission order (the queue runs them first come, first served). */
export function demoSweeps(): DemoSweep[] {
  return [
    // Stiffness × 30/60/120 Hz × two integrators: exploded cells at the stiff, coarse corner.
    // Run a little longer than the template, so that a visitor's own first run of the template (the
    // builder's first suggestion) is computed and billed afresh, not served from these stored cells.
    { role: "exploded-cells", spec: longer(template("frame-rate-stiffness"), 3) },
    // Puckyard air hockey: symplectic Euler against velocity Verlet over stiffness × frame step.
    { role: "integrators", spec: puckyard as SweepSpecInput },
    // Jellybean Jar: candy discs settling in a walled box.
    { role: "box-scene", spec: jellybeanJar as SweepSpecInput },
    // Tunnelling speed × frame step: the largest, submitted last.
    { role: "tunnelling", spec: template("tunnelling-speed") },
  ];
}

async function sweepNamed(db: Db, studioId: string, name: string): Promise<boolean> {
  const [row] = await db.select({ id: sweeps.id }).from(sweeps).where(and(eq(sweeps.studioId, studioId), eq(sweeps.name, name))).limit(1);
  return Boolean(row);
}

/** Submits whatever part of the demo's work is missing; returns how many sweeps it submitted. */
export async function seedDemoResults(db: Db, studioId: string, engineerId: string | null): Promise<number> {
  let submitted = 0;
  const all = demoSweeps();
  const last = all.pop()!;
  for (const sweep of all) {
    const name = sweep.spec.name ?? sweep.role;
    if (await sweepNamed(db, studioId, name)) continue;
    await submitSweep(db, studioId, { spec: sweep.spec, name, createdByUserId: engineerId });
    submitted++;
  }
  // The catalogue check of Crateslide's objects at the game's own settings (60 Hz, one stiffness).
  const [catalogue] = await db.select().from(catalogues).where(and(eq(catalogues.studioId, studioId), eq(catalogues.name, CRATESLIDE_CATALOGUE_NAME))).limit(1);
  if (catalogue) {
    const [check] = await db.select({ id: catalogueChecks.id }).from(catalogueChecks).where(eq(catalogueChecks.catalogueId, catalogue.id)).limit(1);
    if (!check) {
      await submitCheck(db, studioId, catalogue, { settings: CRATESLIDE_SETTINGS, createdByUserId: engineerId });
      submitted++;
    }
  }
  // A sweep over the uploaded loading-bay snapshot.
  const [snapshot] = await db.select().from(snapshots).where(and(eq(snapshots.studioId, studioId), eq(snapshots.name, CRATESLIDE_SNAPSHOT_NAME))).limit(1);
  if (snapshot) {
    const spec = snapshotSweepSpec(snapshot);
    const name = spec.name ?? `${snapshot.name} sweep`;
    if (!(await sweepNamed(db, studioId, name))) {
      await submitSweep(db, studioId, { spec, name, createdByUserId: engineerId });
      submitted++;
    }
  }
  const lastName = last.spec.name ?? last.role;
  if (!(await sweepNamed(db, studioId, lastName))) {
    await submitSweep(db, studioId, { spec: last.spec, name: lastName, createdByUserId: engineerId });
    submitted++;
  }
  return submitted;
}
