/**
 * A studio's suspension as its members meet it: the reason and time of the latest suspension (read
 * from the audit log, where the admin's reason is kept), and the e-mail every member gets when a
 * studio is suspended or reinstated (queued in the transaction that changes the status).
 */
import "server-only";
import { randomBytes } from "node:crypto";
import { and, desc, eq } from "drizzle-orm";
import type { DbOrTx } from "@/db/client";
import { auditLog, memberships, users, type Studio } from "@/db/schema";
import { appBaseUrl } from "@/lib/auth/config";
import { layout, type MailContent } from "@/lib/mail/templates";
import { queueMail } from "@/lib/outbox/mail";

export interface Suspension {
  reason: string;
  since: string;
}

/** The current suspension of a studio, or null when it is active. */
export async function studioSuspension(db: DbOrTx, studio: Pick<Studio, "id" | "status">): Promise<Suspension | null> {
  if (studio.status !== "suspended") return null;
  const [row] = await db
    .select({ reason: auditLog.reason, at: auditLog.createdAt })
    .from(auditLog)
    .where(and(eq(auditLog.studioId, studio.id), eq(auditLog.action, "studio.suspend")))
    .orderBy(desc(auditLog.createdAt), desc(auditLog.id))
    .limit(1);
  return { reason: row?.reason ?? "", since: (row?.at ?? new Date(0)).toISOString() };
}

export function studioStatusMail(input: { studioId: string; studioName: string; status: "active" | "suspended"; reason: string }): MailContent {
  const url = `${appBaseUrl()}/studios/${encodeURIComponent(input.studioId)}`;
  const suspended = input.status === "suspended";
  const subject = suspended ? `${input.studioName} is suspended on Kickdrift` : `${input.studioName} is active again on Kickdrift`;
  const lines = suspended
    ? [
        `A Kickdrift administrator suspended ${input.studioName}. Reason: ${input.reason}`,
        "Its queued and running sweeps are paused and new sweeps are refused until the suspension is lifted. You can still sign in, read and export every result.",
      ]
    : [`A Kickdrift administrator lifted the suspension of ${input.studioName}. Reason: ${input.reason}`, "Its paused sweeps resume on their own; new sweeps are accepted again."];
  const footer = "You get this message because you are a member of the studio.";
  return {
    subject,
    text: `${lines.join("\n\n")}\n\nOpen the studio: ${url}\n\n${footer}\n`,
    html: layout(subject, lines, { label: "Open the studio", url }, footer),
  };
}

/** Queues the status e-mail to every member of the studio; call inside the transaction that changes the status. */
export async function queueStudioStatusMail(tx: DbOrTx, studio: Pick<Studio, "id" | "name">, status: "active" | "suspended", reason: string): Promise<number> {
  const members = await tx.select({ email: users.email }).from(memberships).innerJoin(users, eq(users.id, memberships.userId)).where(eq(memberships.studioId, studio.id)).orderBy(users.email);
  // One key per change: the status transaction runs once per change (a retry finds the status set and queues nothing).
  const change = randomBytes(9).toString("base64url");
  const content = studioStatusMail({ studioId: studio.id, studioName: studio.name, status, reason });
  let queued = 0;
  for (const member of members) {
    if (await queueMail(tx, { idempotencyKey: `mail:studio-${status}:${studio.id}:${change}:${member.email}`, to: member.email, content, studioId: studio.id })) queued++;
  }
  return queued;
}
