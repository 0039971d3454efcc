import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { connection } from "next/server";
import { Mailbox } from "@/components/mail/mailbox";
import { isMailFakeEnabled } from "@/lib/mail/mode";

export const metadata: Metadata = { title: "Mailbox" };

export default async function MailPage() {
  // Decide per request from the running server's environment, not at build time.
  await connection();
  if (!isMailFakeEnabled()) notFound();
  return <Mailbox />;
}
