import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { connection } from "next/server";
import { Mailbox } from "@/components/mail/mailbox";
import { requireAdmin } from "@/lib/auth/page-guard";
import { isMailFakeEnabled } from "@/lib/mail/mode";

export const metadata: Metadata = { title: "Mailbox" };

export default async function MailPage() {
  // Decide per request from the running server's environment, not at build time.
  await connection();
  if (!isMailFakeEnabled()) notFound();
  // Captured mail holds sign-in, reset and invite links: a platform admin's page only.
  await requireAdmin("/mail");
  return <Mailbox />;
}
