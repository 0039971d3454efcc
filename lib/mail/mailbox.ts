import "server-only";
import { desc } from "drizzle-orm";
import { getDb } from "@/db/client";
import { mailMessages } from "@/db/schema";

export interface CapturedMail {
  id: string;
  from: string;
  to: string;
  subject: string;
  text: string;
  html: string;
  links: string[];
  receivedAt: string;
}

/** Newest first; the local mailbox keeps at most `limit` messages in view. */
export async function listCapturedMail(limit = 200): Promise<CapturedMail[]> {
  const db = await getDb();
  const rows = await db.select().from(mailMessages).orderBy(desc(mailMessages.receivedAt), desc(mailMessages.id)).limit(limit);
  return rows.map((m) => ({
    id: m.id,
    from: m.fromAddress,
    to: m.toAddresses,
    subject: m.subject,
    text: m.text,
    html: m.html,
    links: m.links,
    receivedAt: m.receivedAt.toISOString(),
  }));
}
