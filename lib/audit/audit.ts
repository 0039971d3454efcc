/**
 * The audit log: who did what to whom and when, with the values before and after. Rows are only
 * ever inserted (this module has no update or delete, and `ensureAuditAppendOnly` makes the
 * database refuse both). Writers call `writeAudit` inside the transaction that makes the change,
 * so a change and its record commit or roll back together.
 */
import "server-only";
import { and, desc, eq, gte, lte, sql, type SQL } from "drizzle-orm";
import { z } from "@/lib/zod";
import type { DbOrTx } from "@/db/client";
import { auditLog, type AuditLogRow, type User } from "@/db/schema";
import { ApiError } from "@/lib/errors";
import { csvText } from "@/lib/csv";

export const AUDIT_ACTIONS = [
  "quota.update",
  "credit.adjust",
  "studio.suspend",
  "studio.reinstate",
  "member.role_change",
  "member.remove",
  "token.create",
  "token.revoke",
  "user.platform_role",
  "payment.mismatch",
  "payment.purchase",
  "invite.create",
  "invite.withdraw",
  "invite.accept",
  "payment.refund",
  "meter_event.retry",
  "meter_event.rekey",
  "billing.details",
  "overage.switch",
] as const;
export type AuditAction = (typeof AUDIT_ACTIONS)[number];

export interface AuditWrite {
  /** The acting person; null for the system. */
  actor: Pick<User, "id" | "email"> | null;
  studioId: string | null;
  action: AuditAction;
  subjectType: string;
  subjectId: string;
  before?: unknown;
  after?: unknown;
  reason?: string;
}

export async function writeAudit(tx: DbOrTx, entry: AuditWrite): Promise<void> {
  await tx.insert(auditLog).values({
    actorUserId: entry.actor?.id ?? null,
    actorLabel: entry.actor?.email ?? "system",
    studioId: entry.studioId,
    action: entry.action,
    subjectType: entry.subjectType,
    subjectId: entry.subjectId,
    before: (entry.before ?? null) as object | null,
    after: (entry.after ?? null) as object | null,
    reason: entry.reason ?? "",
  });
}

/**
 * Makes the database itself refuse UPDATE and DELETE on audit_log (a trigger; idempotent, run at
 * start-up and by tests). drizzle-kit cannot generate triggers, so this lives in code.
 */
export async function ensureAuditAppendOnly(db: DbOrTx): Promise<void> {
  await db.execute(sql`
    create or replace function kickdrift_audit_append_only() returns trigger language plpgsql as $$
    begin
      -- The one change allowed: the foreign key nulling the actor when that user is deleted.
      if tg_op = 'UPDATE' and new.actor_user_id is null and (to_jsonb(new) - 'actor_user_id') = (to_jsonb(old) - 'actor_user_id') then
        return new;
      end if;
      raise exception 'audit_log is append-only';
    end $$`);
  await db.execute(sql`drop trigger if exists audit_log_append_only on audit_log`);
  await db.execute(sql`
    create trigger audit_log_append_only before update or delete on audit_log
    for each row execute function kickdrift_audit_append_only()`);
}

const isoDate = (name: string) =>
  z
    .string()
    .refine((v) => !Number.isNaN(Date.parse(v)), { error: `${name} must be an ISO date or date-time, e.g. 2026-12-01` })
    .transform((v) => new Date(v))
    .optional();

export const auditQuerySchema = z.strictObject({
  studioId: z.string().max(100).optional(),
  action: z.enum(AUDIT_ACTIONS, { error: `action must be one of ${AUDIT_ACTIONS.join(", ")}` }).optional(),
  actor: z.string().max(320, { error: "actor must be at most 320 characters" }).optional(),
  from: isoDate("from"),
  to: isoDate("to"),
  limit: z.coerce
    .number({ error: "limit must be an integer from 1 to 5000" })
    .int({ error: "limit must be an integer from 1 to 5000" })
    .min(1, { error: "limit must be an integer from 1 to 5000" })
    .max(5000, { error: "limit must be an integer from 1 to 5000" })
    .default(200),
  format: z.enum(["json", "csv"], { error: 'format must be "json" or "csv"' }).default("json"),
});
export type AuditQuery = z.infer<typeof auditQuerySchema>;

export interface AuditView {
  id: number;
  at: string;
  actor: string;
  actorUserId: string | null;
  studioId: string | null;
  action: string;
  subjectType: string;
  subjectId: string;
  before: unknown;
  after: unknown;
  reason: string;
}

function view(row: AuditLogRow): AuditView {
  return {
    id: row.id,
    at: row.createdAt.toISOString(),
    actor: row.actorLabel,
    actorUserId: row.actorUserId,
    studioId: row.studioId,
    action: row.action,
    subjectType: row.subjectType,
    subjectId: row.subjectId,
    before: row.before,
    after: row.after,
    reason: row.reason,
  };
}

/** Newest first; `to` is inclusive. */
export async function listAudit(db: DbOrTx, query: Partial<AuditQuery>): Promise<AuditView[]> {
  if (query.from && query.to && query.from > query.to) throw new ApiError("validation_failed", "from must not be after to.", "from");
  const where: SQL[] = [];
  if (query.studioId) where.push(eq(auditLog.studioId, query.studioId));
  if (query.action) where.push(eq(auditLog.action, query.action));
  if (query.actor) where.push(eq(auditLog.actorLabel, query.actor.toLowerCase()));
  if (query.from) where.push(gte(auditLog.createdAt, query.from));
  if (query.to) where.push(lte(auditLog.createdAt, query.to));
  const rows = await db
    .select()
    .from(auditLog)
    .where(where.length ? and(...where) : undefined)
    .orderBy(desc(auditLog.createdAt), desc(auditLog.id))
    .limit(query.limit ?? 200);
  return rows.map(view);
}

export const AUDIT_CSV_COLUMNS = ["id", "at", "actor", "studio_id", "action", "subject_type", "subject_id", "before", "after", "reason"] as const;

export function auditCsv(rows: readonly AuditView[]): string {
  const lines = [AUDIT_CSV_COLUMNS.join(",")];
  for (const r of rows) {
    lines.push(
      [String(r.id), r.at, r.actor, r.studioId ?? "", r.action, r.subjectType, r.subjectId, r.before === null ? "" : JSON.stringify(r.before), r.after === null ? "" : JSON.stringify(r.after), r.reason]
        .map(csvText)
        .join(","),
    );
  }
  return lines.join("\r\n") + "\r\n";
}

