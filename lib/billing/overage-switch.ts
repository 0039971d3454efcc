/**
 * The owner's overage switch. A platform admin sets the ceiling (studio_quotas.overage_allowed and
 * overage_cap_ms); within it the studio's owner turns overage on or off (studio_quotas.overage_on,
 * null = on, as it was before owners had a say). Overage accrues only when both are on and no unpaid
 * invoice holds it off (lib/billing/overdue.ts). Turning it off stops new overage at the next chunk:
 * every chunk reads the studio's standing afresh (lib/billing/usage.ts recordChunkUsage).
 */
import "server-only";
import { eq, sql } from "drizzle-orm";
import { z } from "@/lib/zod";
import type { Db, DbOrTx } from "@/db/client";
import { studioQuotas, type User } from "@/db/schema";
import { writeAudit } from "@/lib/audit/audit";
import { ApiError } from "@/lib/errors";
import { enqueueOutbox } from "@/lib/outbox/outbox";
import { pokeOutbox } from "@/lib/outbox/process";
import { PLAN_DEFAULTS, storedOverage } from "@/lib/quotas/plan";
import { overageHold } from "./overdue";
import { OVERAGE_SUBSCRIPTION_KIND } from "./usage";

export const overageSwitchSchema = z.strictObject({
  overageOn: z.boolean({ error: "overageOn must be true or false" }),
});
export type OverageSwitchInput = z.output<typeof overageSwitchSchema>;

export interface OverageSwitch {
  /** The platform admin's ceiling: whether this studio may have overage at all. */
  permitted: boolean;
  /** The owner's switch. */
  on: boolean;
  /** Overage accrues now: permitted, on, and not held by an unpaid invoice. */
  allowed: boolean;
  held: boolean;
  capMs: number;
}

/**
 * Queues the studio's overage subscription (anchored to the 1st) once both the admin and the owner
 * have overage on: through the outbox, so a Stripe outage delays it rather than losing it; keyed per
 * studio, so switching off and on again queues nothing new.
 */
export async function queueOverageSubscription(tx: DbOrTx, studioId: string): Promise<void> {
  await enqueueOutbox(tx, { kind: OVERAGE_SUBSCRIPTION_KIND, idempotencyKey: `overage-subscription:${studioId}`, payload: { studioId }, studioId });
}

/** The admin's permission and the owner's switch as stored (no hold): one read of the quota row. */
export async function overageSettings(db: DbOrTx, studioId: string): Promise<{ permitted: boolean; on: boolean; capMs: number }> {
  const [row] = await db.select({ allowed: studioQuotas.overageAllowed, on: studioQuotas.overageOn, capMs: studioQuotas.overageCapMs }).from(studioQuotas).where(eq(studioQuotas.studioId, studioId));
  const { permitted, on } = storedOverage(row?.allowed, row?.on);
  return { permitted, on, capMs: row?.capMs ?? PLAN_DEFAULTS.overageCapMs };
}

export async function overageSwitch(db: DbOrTx, studioId: string): Promise<OverageSwitch> {
  const [settings, hold] = await Promise.all([overageSettings(db, studioId), overageHold(db, studioId)]);
  const held = hold.suspended;
  return { permitted: settings.permitted, on: settings.on, allowed: settings.permitted && settings.on && !held, held, capMs: settings.capMs };
}

/**
 * Sets the owner's switch. The same value again changes nothing and writes no audit row; turning it
 * on where the admin has not permitted overage is refused (409) naming the field.
 */
export async function setOverageOn(db: Db, actor: Pick<User, "id" | "email">, studioId: string, input: OverageSwitchInput): Promise<OverageSwitch> {
  let queued = false;
  await db.transaction(async (tx) => {
    // The studio row is the lock the quota edits take too: an admin edit and an owner's switch serialise.
    await tx.execute(sql`select id from studios where id = ${studioId} for update`);
    const [row] = await tx.select({ allowed: studioQuotas.overageAllowed, on: studioQuotas.overageOn }).from(studioQuotas).where(eq(studioQuotas.studioId, studioId)).for("update");
    const { permitted, on: before } = storedOverage(row?.allowed, row?.on);
    if (input.overageOn && !permitted) {
      throw new ApiError("invalid_state", "overageOn cannot be true: overage is not permitted for this studio (a platform admin sets overageAllowed). Ask Kickdrift support to permit it.", "overageOn");
    }
    if (before === input.overageOn) return;
    await tx.insert(studioQuotas).values({ studioId, overageOn: input.overageOn, updatedAt: new Date(), updatedByUserId: actor.id }).onConflictDoUpdate({ target: studioQuotas.studioId, set: { overageOn: input.overageOn, updatedAt: new Date(), updatedByUserId: actor.id } });
    if (input.overageOn) {
      await queueOverageSubscription(tx, studioId);
      queued = true;
    }
    await writeAudit(tx, { actor, studioId, action: "overage.switch", subjectType: "studio", subjectId: studioId, before: { overageOn: before }, after: { overageOn: input.overageOn } });
  });
  if (queued) pokeOutbox();
  return overageSwitch(db, studioId);
}
