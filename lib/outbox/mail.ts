/**
 * E-mail through the outbox: `queueMail` inside the transaction that causes the message, and the
 * dispatcher's "mail" handler sends it with the app's transport (the local fake or SMTP_URL).
 */
import "server-only";
import type { DbOrTx } from "@/db/client";
import type { OutboxRow } from "@/db/schema";
import type { MailContent } from "@/lib/mail/templates";
import { enqueueOutbox, PermanentDeliveryError } from "./outbox";

export const MAIL_KIND = "mail";

export interface MailPayload extends MailContent {
  to: string;
}

/** Queues one message; a second call with the same key (a retried writer) queues nothing. Returns true when queued now. */
export function queueMail(db: DbOrTx, input: { idempotencyKey: string; to: string; content: MailContent; studioId?: string | null }): Promise<boolean> {
  const payload: MailPayload = { to: input.to, ...input.content };
  return enqueueOutbox(db, { kind: MAIL_KIND, idempotencyKey: input.idempotencyKey, payload, studioId: input.studioId });
}

export async function deliverMail(row: OutboxRow): Promise<void> {
  const payload = row.payload as Partial<MailPayload>;
  if (typeof payload.to !== "string" || typeof payload.subject !== "string") throw new PermanentDeliveryError("mail payload lacks to or subject");
  const { sendMail } = await import("@/lib/mail/send");
  await sendMail(payload.to, { subject: payload.subject, text: payload.text ?? "", html: payload.html ?? "" });
}
